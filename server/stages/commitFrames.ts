// Stage "store": a frame's result (its processed mark, the state after it, its series row, maps,
// footpoints, memory) is committed in one transaction of the store writer. The state is set in
// memory first, so an acknowledgement or a refusal arriving during the write builds on it; if the
// write fails the memory goes back to what the store holds and the frame stays pending (a full
// disk throws DiskFullError: the region is tried again when space may be back). A frame whose
// analysis failed is recorded as a refusal after its commit.
//
//   accumulated$.pipe(commitFrames({ region: 'ar1', writer, disk, setState, dropState, refuse }))

import type { OperatorFunction } from 'rxjs';
import { concatMap, from, map } from 'rxjs';
import type { AccumulationState } from '../../core/accumulate.js';
import { DiskFullError, isDiskFull } from '../diskFull.js';
import type { DiskStatus } from '../diskStatus.js';
import type { StoreWriter } from '../storeWriter.js';
import { mapsFileOf } from './computeFrames.js';
import type { AccumulatedFrame } from './frameWork.js';

export interface CommitDeps {
  readonly region: string;
  readonly writer: StoreWriter;
  readonly disk: DiskStatus;
  /** Holds the region's state in memory. */
  readonly setState: (state: AccumulationState) => void;
  /** Forgets the region's state in memory (read back from the store next time). */
  readonly dropState: () => void;
  /** Called after a successful commit. */
  readonly committed?: () => void;
  /** Records a refusal for the region (never throws). */
  readonly refuse: (r: { status: number; source: string; field: string; reason: string; frameTime?: number }) => Promise<void>;
}

export function commitFrames(deps: CommitDeps): OperatorFunction<AccumulatedFrame, AccumulatedFrame> {
  return concatMap((a) => from(commitFrame(a, deps)).pipe(map(() => a)));
}

async function commitFrame(a: AccumulatedFrame, deps: CommitDeps): Promise<void> {
  deps.setState(a.state);
  try {
    await deps.writer.call('commitProcessed', commitRecord(deps.region, a));
  } catch (e) {
    deps.dropState();
    if (isDiskFull(e)) throw new DiskFullError(e, `frame ${a.frame.id} (its result could not be stored)`);
    throw e;
  }
  deps.disk.writeOk();
  deps.committed?.();
  if (a.failure) {
    await deps.refuse({
      status: 422, source: a.frame.source, field: a.failure.field,
      reason: `frame ${a.frame.id} (${new Date(a.frame.time).toISOString()}) was stored but its analysis failed: ${a.failure.problem}`,
      frameTime: a.frame.time,
    });
  }
}

/** What the store writes for a processed frame (StoreWriter 'commitProcessed'). */
function commitRecord(region: string, a: AccumulatedFrame) {
  const reply = a.reply;
  return {
    region, frameId: a.frame.id, processed: (a.failure ? 2 : 1) as 1 | 2, carry: a.state,
    ...(a.row && a.sample && { row: a.row, sampleTime: a.sample.time }),
    ...(reply.ok && reply.mapsWritten && { mapsFile: mapsFileOf(region, a.frame.id) }),
    ...(reply.ok && reply.waiting !== undefined && { waiting: reply.waiting }),
    ...(a.failure && { waiting: `analysis failed: ${a.failure.problem}` }),
    ...(reply.ok && reply.footpoints !== undefined && { footpoints: reply.footpoints }),
    ...(reply.ok && reply.events !== undefined && { events: reply.events }),
    ...(reply.ok && reply.memory !== undefined && { memory: reply.memory }),
  };
}
