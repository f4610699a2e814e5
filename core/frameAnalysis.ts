// The per-frame step of the pipeline: given the state after the previous frame and a new frame,
// produce the rate sample (when one can be made), the maps worth keeping and the next state.
// A frame that carries its velocity gives a sample at its own time; a frame without velocity
// gives one at the mid-time of it and the previous frame, from the inferred velocity.

import type { FluxKernelCache } from './fluxKernel.js';
import type { Frame } from './frame.js';
import { checkFrame, hasVelocity } from './frame.js';
import type { RateSample } from './rateSample.js';
import { rateSample } from './rateSample.js';

export interface AnalysisSettings {
  /** Noise of bn in G; estimated from each frame when not given. */
  readonly noiseG?: number;
}

export interface AnalysisState {
  /** The previous frame (needed to infer velocities and to track footpoints). */
  readonly previous?: Frame;
}

export interface FrameAnalysis {
  /** The sample, or undefined with `waiting` saying why none could be made yet. */
  readonly sample?: RateSample;
  readonly waiting?: string;
  readonly maps: {
    readonly gTheta?: Float64Array;
    readonly labels?: Int32Array;
    readonly vx?: Float64Array;
    readonly vy?: Float64Array;
  };
  readonly state: AnalysisState;
}

export function analyseFrame(
  frame: Frame, state: AnalysisState, settings: AnalysisSettings = {}, cache?: FluxKernelCache,
): FrameAnalysis {
  checkFrame(frame);
  const next: AnalysisState = { previous: frame };
  if (!hasVelocity(frame)) {
    return { waiting: 'the frame carries no velocity and none can be inferred yet', maps: {}, state: next };
  }
  const r = rateSample({ frame, ...(settings.noiseG !== undefined && { noiseG: settings.noiseG }), ...(cache && { cache }) });
  return {
    sample: r.sample,
    maps: { gTheta: r.gTheta, ...(frame.labels && { labels: frame.labels }), vx: frame.vx, vy: frame.vy },
    state: next,
  };
}
