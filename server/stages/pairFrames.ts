// Stage "pair": a stored frame meets the last frame processed before it in its region (the pair
// the velocity is inferred from, and what rebuilds a worker's state after a restart).
//
//   frames$.pipe(pairFrames((time) => store.lastGood('ar1', time)))

import type { OperatorFunction } from 'rxjs';
import { map } from 'rxjs';
import type { FrameRow } from '../store.js';
import type { PairedFrame } from './frameWork.js';

export function pairFrames(lastGoodBefore: (time: number) => FrameRow | undefined, now: () => number = Date.now): OperatorFunction<FrameRow, PairedFrame> {
  return map((frame) => ({ frame, previous: lastGoodBefore(frame.time), started: now() }));
}
