// Stage "compute": a paired frame is analysed in a compute worker (the velocity, the rate and its
// split, the footpoints; its maps written beside it). A worker that dies is replaced and the frame
// tried once more (retryOnce); a second failure marks the frame failed with the reason. Maps that
// could not be written for lack of space are not the frame's fault: the stage throws
// DiskFullError and the frame stays pending until space is back.
//
//   paired$.pipe(computeFrames({ region: 'ar1', store, pool, tookMs: (ms) => ... }))

import { join } from 'node:path';
import type { OperatorFunction } from 'rxjs';
import { concatMap, defer, map } from 'rxjs';
import type { AnalysisMemory } from '../../core/analysisMemory.js';
import { memoryFrameTime, restoreSpanS } from '../../core/analysisMemory.js';
import { resolveVelocitySettings } from '../../core/velocity/velocitySettings.js';
import type { AnalysisSettings } from '../../core/frameAnalysis.js';
import type { ComputePool } from '../computePool.js';
import type { WorkerReply } from '../computeMessages.js';
import { DiskFullError } from '../diskFull.js';
import type { Store } from '../store.js';
import type { ComputedFrame, PairedFrame } from './frameWork.js';
import { retryOnce } from './retryOnce.js';

export interface ComputeDeps {
  readonly region: string;
  readonly store: Store;
  readonly pool: ComputePool;
  /** How long the frame's work took, ms (for Retry-After). */
  readonly tookMs?: (ms: number) => void;
  readonly now?: () => number;
}

/** Where a frame's maps are stored, relative to the data folder. */
export function mapsFileOf(region: string, frameId: number): string {
  return join('maps', region, `${frameId}.hlcm`);
}

export function computeFrames(deps: ComputeDeps): OperatorFunction<PairedFrame, ComputedFrame> {
  const now = deps.now ?? Date.now;
  return concatMap((p) => defer(() => deps.pool.analyse(jobFor(p, deps))).pipe(
    retryOnce((e): WorkerReply => ({ id: 0, ok: false, error: { source: p.frame.source, field: '(analysis)', problem: String((e as Error)?.message ?? e), message: String(e) } })),
    map((reply) => {
      deps.tookMs?.(now() - p.started);
      return computed(p, reply);
    }),
  ));
}

function jobFor(p: PairedFrame, deps: ComputeDeps) {
  const { region, store } = deps;
  const settings = store.region(region)?.settings;
  const abs = (path: string) => join(store.dataDir, path);
  const previous = p.previous;
  // What rebuilds the worker's state after `previous` when it does not follow it (read only
  // then): the frames within the motion baseline up to it, the memory stored with it, and when
  // the memory's footpoint table is older than those frames (a pair too far apart gave no table
  // since), the frames around the table's time, which it was made on.
  const primer = previous && {
    id: previous.id,
    frames: () => {
      const analysis = (settings?.analysis ?? {}) as AnalysisSettings;
      const spanMs = 1000 * restoreSpanS(analysis);
      const memory = store.frameMemory(previous.id);
      const recent = store.goodFramesBetween(region, previous.time - spanMs, previous.time);
      const tableTime = memoryFrameTime(memory as AnalysisMemory | undefined);
      const pairMs = 1000 * resolveVelocitySettings(analysis.velocity).maxIntervalS;
      const older = tableTime !== undefined && tableTime < previous.time - spanMs
        ? store.goodFramesBetween(region, tableTime - pairMs, Math.min(tableTime + pairMs, previous.time - spanMs - 1))
        : [];
      const frames = [...older, ...recent].map((f) => abs(f.file));
      return { frames, ...(memory !== undefined && { memory }) };
    },
  };
  return {
    region, frameId: p.frame.id, framePath: abs(p.frame.file),
    ...(primer && { previous: primer }),
    settings: settings?.analysis ?? {}, mapsPath: abs(mapsFileOf(region, p.frame.id)),
  };
}

function computed(p: PairedFrame, reply: WorkerReply): ComputedFrame {
  if (!reply.ok && reply.error.diskFull) {
    // The maps could not be written for lack of space: not a failure of the frame.
    throw new DiskFullError(new Error(reply.error.problem), `frame ${p.frame.id} (its maps could not be written)`);
  }
  if (!reply.ok) return { frame: p.frame, reply, failure: { field: reply.error.field, problem: reply.error.problem } };
  return { frame: p.frame, reply, ...(reply.sample && { sample: reply.sample }) };
}
