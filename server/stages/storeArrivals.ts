// Stage "order and store": a validated frame is checked against what the region holds (its
// existence, frames removed by the operator, duplicates, the grid, the time: from the future, the
// same time with other content, later than the region's lateness), written durably (the frame's
// file, then its row), and only then is the sender answered. A refusal is recorded and answered
// with its status; a full disk answers 507 and stores nothing, so the sender keeps the frame.
// Operations queued in the region's turn run here, between two frames.
//
//   validated$.pipe(storeArrivals({ store, writer, log, refuse, disk, stored: (r) => work$.next(r) }))

import { join } from 'node:path';
import type { OperatorFunction } from 'rxjs';
import { concatMap, from } from 'rxjs';
import { sameGrid } from '../../core/grid.js';
import { InputError } from '../../core/inputError.js';
import { writeFileAtomic } from '../atomicFile.js';
import { isDiskFull } from '../diskFull.js';
import type { DiskStatus } from '../diskStatus.js';
import { DEFAULT_SETTINGS } from '../regionSettings.js';
import type { Store } from '../store.js';
import type { StoreWriter } from '../storeWriter.js';
import type { IngestAnswer, Validated } from './arrivalValues.js';

export interface StoreArrivalDeps {
  readonly store: Store;
  readonly writer: StoreWriter;
  readonly log: (line: string) => void;
  readonly disk: DiskStatus;
  /** Records a refusal (never throws) and gives the sender's answer. */
  readonly refuse: (region: string, status: number, e: InputError, source: string, frameTime?: number) => Promise<IngestAnswer>;
  /** Called once a frame of the region is stored: its processing may start. */
  readonly stored: (region: string) => void;
}

export function storeArrivals(deps: StoreArrivalDeps): OperatorFunction<Validated, void> {
  return concatMap((v) => from(v.turn ? v.turn() : storeArrival(v, deps)));
}

const iso = (t: number) => new Date(t).toISOString();

async function storeArrival(v: Validated, deps: StoreArrivalDeps): Promise<void> {
  const { arrival, resolve } = v;
  const { store, writer } = deps;
  const name = arrival.region;
  const source = arrival.source;
  try {
    if (v.refusal) return resolve(await deps.refuse(name, v.refusal.status, v.refusal.error, source));
    const { meta: frame, hash, bytes } = v.intake!;
    const refuse = (status: number, field: string, problem: string) => deps.refuse(name, status, new InputError(source, field, problem), source, frame.time);
    let region = store.region(name);
    // Live frames only (replays carry archive times): nothing from the future.
    const maxAheadS = (region?.settings ?? DEFAULT_SETTINGS).maxAheadS;
    const ahead = frame.time - Date.now();
    if (arrival.payload.kind !== 'frame' && ahead > maxAheadS * 1000) {
      return resolve(await refuse(422, 'time', `${iso(frame.time)} is ${(ahead / 1000).toFixed(0)} s after the monitor's clock, beyond the region's maxAheadS of ${maxAheadS} s: an observation cannot come from the future`));
    }
    if (!region) {
      if (!arrival.mayCreate) return resolve(await refuse(404, 'region', `no region named "${name}"; it is created on the first frame sent with the token`));
      region = await writer.call('createRegion', name);
      deps.log(`region ${name} created`);
    }
    const removed = store.removedFrame(name, hash);
    if (removed) {
      return resolve(await refuse(409, '(frame)', `this frame (${iso(frame.time)}) was removed from the region on ${iso(removed.removed)} and is not taken again`));
    }
    const dup = store.frameByHash(name, hash);
    if (dup) {
      await writer.call('countDuplicate', name);
      return resolve({ status: 200, body: { status: 'duplicate', frame_id: dup.id, time: iso(dup.time) } });
    }
    const first = store.firstFrame(name);
    if (first && !sameGrid(first, frame)) {
      return resolve(await refuse(409, 'grid', `the region's frames are ${first.nx}x${first.ny} pixels of ${first.dx}x${first.dy} Mm; this one is ${frame.nx}x${frame.ny} of ${frame.dx}x${frame.dy} Mm`));
    }
    const same = store.frameAtTime(name, frame.time);
    if (same) return resolve(await refuse(409, 'time', `another frame (id ${same.id}) with the time ${iso(frame.time)} is already stored, with different content`));
    const latest = store.latestTime(name);
    const latenessS = region.settings.latenessS;
    if (latest !== undefined && frame.time < latest - latenessS * 1000) {
      return resolve(await refuse(409, 'time', `too late: ${iso(frame.time)} is ${((latest - frame.time) / 1000).toFixed(0)} s before the newest frame (${iso(latest)}), beyond the region's lateness of ${latenessS} s`));
    }
    const file = join('frames', name, `${hash}.hlcm`);
    await writeFileAtomic(join(store.dataDir, file), bytes, 0o600);
    const id = await writer.call('insertFrame', {
      region: name, time: frame.time, hash, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy,
      source, received: Date.now(), file,
    });
    deps.disk.writeOk();
    resolve({ status: 201, body: { status: 'stored', frame_id: id, time: iso(frame.time) } });
    deps.stored(name);
  } catch (e) {
    if (isDiskFull(e)) {
      // Nothing was acknowledged: the sender keeps the frame and sends it again later.
      deps.disk.full(`a frame for ${name}`, e);
      return resolve({ status: 507, retryAfterS: 30, body: { error: 'the monitor\'s disk is full: the frame was not stored; send it again later', field: '(disk)', problem: 'no space left to store the frame' } });
    }
    deps.log(`storing a frame for ${name} failed: ${(e as Error).stack ?? e}`);
    resolve({ status: 500, body: { error: 'the frame could not be stored', field: '(server)', problem: String((e as Error).message ?? e) } });
  }
}
