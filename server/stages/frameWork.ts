// The values that pass between the monitor's processing stages, one frame at a time:
// pair -> compute -> accumulate -> store -> broadcast. Immutable: each stage returns a new value.

import type { AlertChange, AlertRecord } from '../../core/alerts/alertState.js';
import type { AccumulationState } from '../../core/accumulate.js';
import type { RateSample } from '../../core/rateSample.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import type { WorkerReply } from '../computeMessages.js';
import type { FrameRow } from '../store.js';

/** A stored frame with the last frame processed before it (its pair for the velocity). */
export interface PairedFrame {
  readonly frame: FrameRow;
  readonly previous: FrameRow | undefined;
  /** When the frame's work started, ms (the monitor's mean frame time feeds Retry-After). */
  readonly started: number;
}

/** The worker's answer for a frame: its sample, or why its analysis failed. */
export interface ComputedFrame {
  readonly frame: FrameRow;
  readonly reply: WorkerReply;
  readonly sample?: RateSample;
  readonly failure?: { readonly field: string; readonly problem: string };
}

/** A computed frame after the budget and the rules: the state to store with it and its row. */
export interface AccumulatedFrame extends ComputedFrame {
  readonly state: AccumulationState;
  readonly row?: SeriesRow;
  readonly changes: readonly { readonly alert: AlertRecord; readonly change: AlertChange }[];
}
