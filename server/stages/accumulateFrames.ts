// Stage "accumulate": a computed frame's sample goes through core's one accumulation step
// (core/accumulate.ts: budget, alert rules, series row, gap flags), the step the batch takes too.
// A frame without a sample carries the region's state unchanged; a sample the budget refuses
// (time out of order) turns into the frame's failure.
//
//   computed$.pipe(accumulateFrames({ state: () => pipeline.accumulation('ar1'), settings: () => store.region('ar1')?.settings }))

import type { OperatorFunction } from 'rxjs';
import { map } from 'rxjs';
import type { AccumulationState } from '../../core/accumulate.js';
import { accumulate } from '../../core/accumulate.js';
import type { RegionSettings } from '../regionSettings.js';
import type { AccumulatedFrame, ComputedFrame } from './frameWork.js';

export interface AccumulateDeps {
  /** The region's state after its last committed frame. */
  readonly state: () => AccumulationState;
  readonly settings: () => RegionSettings | undefined;
}

export function accumulateFrames(deps: AccumulateDeps): OperatorFunction<ComputedFrame, AccumulatedFrame> {
  return map((c) => accumulateFrame(c, deps.state(), deps.settings()));
}

export function accumulateFrame(c: ComputedFrame, state: AccumulationState, settings: RegionSettings | undefined): AccumulatedFrame {
  if (!c.sample) return { ...c, state, changes: [] };
  try {
    const step = accumulate(state, c.sample, { budget: settings?.budget, rules: settings?.rules ?? {} }, { frameId: c.frame.id });
    return { ...c, state: step.state, row: step.row, changes: step.changes };
  } catch (e) {
    const { sample: _refused, ...rest } = c;
    return { ...rest, state, changes: [], failure: { field: 'time', problem: (e as Error).message } };
  }
}
