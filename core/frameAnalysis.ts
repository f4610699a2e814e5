// The per-frame step of the pipeline: given the state after the previous frame and a new frame,
// produce the rate sample (when one can be made), the footpoints, the maps worth keeping and the
// next state.
//
// - A frame that carries its velocity gives a sample at its own time, and its footpoints are
//   found and tracked on it.
// - A frame without velocity gives a sample at the mid-time of it and the previous frame: the
//   velocity is inferred between them (core/velocity) and belongs to the mid-time frame (the
//   average of the two), so the rate, the footpoints and the split are all taken on that frame.
//   The first such frame of a sequence only waits for its partner.

import type { FluxKernelCache } from './fluxKernel.js';
import type { Frame } from './frame.js';
import { checkFrame, hasVelocity } from './frame.js';
import type { VelocityMaps } from './fluxTransport.js';
import type { FootpointAnalysis, FootpointSettings, FootpointState } from './footpoints/analyseFootpoints.js';
import { analyseFootpoints } from './footpoints/analyseFootpoints.js';
import type { RateSample } from './rateSample.js';
import { rateSample } from './rateSample.js';
import { inferVelocity } from './velocity/inferVelocity.js';
import { midFrame } from './velocity/midFrame.js';
import type { VelocitySettings } from './velocity/velocitySettings.js';
import { resolveVelocitySettings } from './velocity/velocitySettings.js';

export interface AnalysisSettings {
  /** Noise of bn in G; estimated from each frame when not given. */
  readonly noiseG?: number;
  /** Velocity inference, for frames that carry none. */
  readonly velocity?: Partial<VelocitySettings>;
  /** Segmentation and tracking of footpoints; `false` turns footpoints off. */
  readonly footpoints?: Omit<FootpointSettings, 'kernelCache'> | false;
}

export interface AnalysisState {
  /** The previous frame (needed to infer velocities). */
  readonly previous?: Frame;
  /** The footpoint tracker's state. */
  readonly footpoints?: FootpointState;
}

export interface FrameAnalysis {
  /** The sample, or undefined with `waiting` saying why none could be made yet. */
  readonly sample?: RateSample;
  readonly waiting?: string;
  /** Footpoints of the frame the rate was taken on (undefined when footpoints are off). */
  readonly footpoints?: FootpointAnalysis;
  /** Sentences for the user about the velocity (method, what it cannot see). */
  readonly velocityNotes: readonly string[];
  readonly maps: {
    readonly gTheta?: Float64Array;
    readonly labels?: Int32Array;
    readonly vx?: Float64Array;
    readonly vy?: Float64Array;
    readonly vz?: Float64Array;
  };
  readonly state: AnalysisState;
}

export function analyseFrame(
  frame: Frame, state: AnalysisState, settings: AnalysisSettings = {}, cache?: FluxKernelCache,
): FrameAnalysis {
  checkFrame(frame);
  let rateFrame: Frame;
  let velocity: VelocityMaps | undefined;
  let method = 'given';
  let notes: readonly string[] = [];
  let time = frame.time, dtS = 0;
  if (hasVelocity(frame)) {
    rateFrame = frame;
  } else if (!state.previous) {
    return {
      waiting: 'the frame carries no velocity: waiting for the next frame to infer it', velocityNotes: [],
      maps: {}, state: { previous: frame, ...(state.footpoints && { footpoints: state.footpoints }) },
    };
  } else if (frame.time - state.previous.time > 1000 * resolveVelocitySettings(settings.velocity).maxIntervalS) {
    // Too far apart to infer a velocity: this pair gives no sample (the budget marks the hole),
    // and the next pair starts from this frame.
    const dtS = (frame.time - state.previous.time) / 1000;
    return {
      waiting: `${dtS} s since the previous frame, more than the ${resolveVelocitySettings(settings.velocity).maxIntervalS} s over which a velocity is inferred: no sample for this pair; the next pair starts here`,
      velocityNotes: [], maps: {}, state: { previous: frame, ...(state.footpoints && { footpoints: state.footpoints }) },
    };
  } else {
    const v = inferVelocity(state.previous, frame, settings.velocity);
    rateFrame = midFrame(state.previous, frame);
    velocity = { vx: v.vx, vy: v.vy, ...(v.vz && { vz: v.vz }) };
    method = v.method;
    notes = v.notes;
    time = v.time;
    dtS = v.dtS;
  }

  const fpSettings = settings.footpoints;
  const footpoints = fpSettings === false
    ? undefined
    : analyseFootpoints(state.footpoints, rateFrame, { ...fpSettings, exactSplit: false, ...(cache && { kernelCache: cache }) }, velocity);
  const r = rateSample({
    frame: rateFrame,
    labels: footpoints ? footpoints.labels : null,
    ...(velocity && { velocity }),
    velocityMethod: method,
    time,
    dtS,
    ...(settings.noiseG !== undefined && { noiseG: settings.noiseG }),
    ...(cache && { cache }),
  });
  return {
    sample: r.sample,
    ...(footpoints && { footpoints: withExactSplit(footpoints, r.split) }),
    velocityNotes: notes,
    maps: {
      gTheta: r.gTheta,
      ...(footpoints && { labels: footpoints.labels }),
      vx: velocity?.vx ?? frame.vx,
      vy: velocity?.vy ?? frame.vy,
      ...((velocity?.vz ?? frame.vz) && { vz: velocity?.vz ?? frame.vz }),
    },
    state: { previous: frame, ...(footpoints && { footpoints: footpoints.state }) },
  };
}

/** The footpoint table and pair matrix with the exact split of the rate sample filled in. */
function withExactSplit(fp: FootpointAnalysis, split: ReturnType<typeof rateSample>['split']): FootpointAnalysis {
  if (!split) return fp;
  const index = new Map<number, number>();
  split.ids.forEach((id, j) => index.set(id, j));
  const k = split.ids.length;
  const ids = fp.pairMatrix.ids;
  const K = ids.length;
  const orbitExact = new Float64Array(K * K);
  for (let a = 0; a < K; a++) for (let b = 0; b < K; b++) {
    const p = index.get(ids[a]), q = index.get(ids[b]);
    orbitExact[a * K + b] = a === b ? 0 : p !== undefined && q !== undefined ? split.orbit[p * k + q] : NaN;
  }
  const footpoints = fp.footpoints.map((row) => {
    const p = index.get(row.id);
    return { ...row, spinExact: p === undefined ? null : split.spin[p] };
  });
  const pairs = fp.pairs.map((pair) => {
    const p = index.get(pair.a), q = index.get(pair.b);
    const v = p !== undefined && q !== undefined ? split.orbit[p * k + q] : NaN;
    return { ...pair, orbitExact: Number.isFinite(v) ? v : null };
  }).sort((x, y) => Math.abs(y.orbitExact ?? 0) - Math.abs(x.orbitExact ?? 0));
  return {
    ...fp, footpoints, pairs,
    exact: { spin: split.spinTotal, orbit: split.orbitTotal, background: split.background, total: split.total },
    pairMatrix: { ...fp.pairMatrix, orbitExact },
    flags: fp.flags.filter((f) => f !== 'no-velocity'),
  };
}
