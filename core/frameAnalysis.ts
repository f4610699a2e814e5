// The per-frame step of the pipeline: given the state after the previous frame and a new frame,
// produce the rate sample (when one can be made), the footpoints, the maps worth keeping and the
// next state.
//
// - A frame that carries its velocity gives a sample at its own time, and its footpoints are
//   found and tracked on it.
// - A frame without velocity gives a sample at the mid-time of it and the previous frame: the
//   velocity is inferred between them (core/velocity) and belongs to the mid-time frame (the
//   average of the two), so the rate, the footpoints and the split are all taken on that frame.
//   The first such frame of a sequence only waits for its partner. With footpoints on, each
//   footpoint's rigid motion over the pair is measured from its pattern (core/footpoints/
//   pairMotion.ts) and the velocity the rate uses is built from those motions, the non-rigid part
//   of the inferred field inside footpoints and the inferred field elsewhere
//   (core/footpoints/footpointVelocity.ts).
//
// The split flows one way: footpoints are segmented and tracked, the sample is computed with their
// labels (one flux transport, one split), and the footpoint table takes the sample's split.
//
// The analysis is written as steps (core/frameSteps.ts): the velocity inference and the label split
// are forked, so that a driver with a second thread runs them beside the tracking and the rate.
// `analyseFrame` runs the steps in the caller's thread.

import type { FrameCache } from './frameTasks.js';
import type { Frame } from './frame.js';
import { checkFrame, hasVelocity } from './frame.js';
import type { VelocityMaps } from './fluxTransport.js';
import type { FootpointAnalysis, FootpointSettings, FootpointState, TrackedFrame } from './footpoints/analyseFootpoints.js';
import { describeFootpoints, trackFrame } from './footpoints/analyseFootpoints.js';
import type { FootpointVelocityOptions } from './footpoints/footpointVelocity.js';
import { footpointVelocityField } from './footpoints/footpointVelocity.js';
import { pairMotions } from './footpoints/pairMotion.js';
import { framePatchCentre, meanCentre } from './frameAssembly/wcs.js';
import { transportRotation } from './footpoints/transportRotation.js';
import { SEGMENTATION_DEFAULTS } from './footpoints/segmentation.js';
import { smoothMap } from './footpoints/smoothing.js';
import type { FrameSteps } from './frameSteps.js';
import { fork, join, runSteps } from './frameSteps.js';
import type { RateSample } from './rateSample.js';
import { measureRateSteps } from './measureRate.js';
import type { SphereAnalysisSettings } from './sphere/sphereFrameAnalysis.js';
import { analyseSphericalFrame, sphereToMeasure } from './sphere/sphereFrameAnalysis.js';
import { averageMaps, midFrame } from './velocity/midFrame.js';
import type { InferredVelocity } from './velocity/inferVelocity.js';
import { pairNoise } from './velocity/pairNoise.js';
import type { VelocitySettings } from './velocity/velocitySettings.js';
import { resolveVelocitySettings } from './velocity/velocitySettings.js';

export interface AnalysisSettings {
  /** Noise of bn in G; estimated from each frame when not given. */
  readonly noiseG?: number;
  /** Velocity inference, for frames that carry none. */
  readonly velocity?: Partial<VelocitySettings>;
  /** Segmentation and tracking of footpoints; `false` turns footpoints off. */
  readonly footpoints?: Omit<FootpointSettings, 'kernelCache'> | false;
  /**
   * The velocity used with inferred velocities and footpoints on: 'footpoints' (default) builds it
   * from each footpoint's measured rigid motion; 'inferred' uses the inferred field as it is.
   */
  readonly motionModel?: 'footpoints' | 'inferred';
  readonly footpointVelocity?: FootpointVelocityOptions;
  /**
   * Footpoint motions are measured over at least this many seconds when earlier frames allow
   * (default 720): at short cadences the displacement over one interval is far below the noise, so
   * the motion is taken between the newest frame and the oldest kept frame within this span.
   */
  readonly motionBaselineS?: number;
  /** Maps on the sphere (whole Sun; heliographic patches when asked): rotation profile, frame rate, engine (docs/sphere.md). */
  readonly sphere?: SphereAnalysisSettings;
}

export const DEFAULT_MOTION_BASELINE_S = 720;

/**
 * Footpoint motions are fitted on each footpoint's core, where |bn| is at least this share of its
 * peak: a neighbour's tail at the edge, moving its own way, otherwise reads as a rotation (on our
 * scenes a static round spot 20 px from a spot passing at 0.3 km/s showed -10 deg/h).
 */
export const MOTION_CORE_SHARE = 0.2;

export interface AnalysisState {
  /** The previous frame (needed to infer velocities). */
  readonly previous?: Frame;
  /**
   * Earlier frames' smoothed bn within the motion baseline (oldest first, the previous frame's
   * included), for footpoint motions over a longer interval than one pair.
   */
  readonly history?: readonly { readonly time: number; readonly field: Float64Array }[];
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

/** Share of the field's flux (sum |Bn|) without a velocity above which a sample is flagged. */
export const LEFT_OUT_FLAG_SHARE = 0.01;

export function analyseFrame(
  frame: Frame, state: AnalysisState, settings: AnalysisSettings = {}, cache?: FrameCache,
): FrameAnalysis {
  return runSteps(analyseFrameSteps(frame, state, settings, cache), cache);
}

/** analyseFrame as steps (core/frameSteps.ts): the inference and the split are forked. */
export function* analyseFrameSteps(
  frame: Frame, state: AnalysisState, settings: AnalysisSettings = {}, cache?: FrameCache,
): FrameSteps<FrameAnalysis> {
  checkFrame(frame);
  // A map on the sphere has its own engine (core/sphere/sphereFrameAnalysis.ts says which maps).
  const onSphere = sphereToMeasure(frame, settings.sphere);
  if (onSphere) return analyseSphericalFrame(frame, onSphere, settings);
  const keepFootpoints = state.footpoints && { footpoints: state.footpoints };
  const baselineS = settings.motionBaselineS ?? DEFAULT_MOTION_BASELINE_S;
  const smoothing = (settings.footpoints || undefined)?.smoothing ?? SEGMENTATION_DEFAULTS.smoothing;
  // In the thread's windowed-sum arena when the affine fit has made one (the same numbers, faster).
  const smoothed = (bn = frame.bn) => smoothMap(bn, frame.nx, frame.ny, smoothing, cache?.affineFit?.arena);
  // History for the next frame: this frame's smoothed field added, frames older than the baseline
  // (beyond the one just inside it) dropped.
  const nextHistory = (field: Float64Array, from = state.history ?? []) => {
    const kept = from.filter((h) => frame.time - h.time <= 1000 * baselineS && h.time < frame.time);
    return [...kept, { time: frame.time, field }];
  };
  if (!hasVelocity(frame) && !state.previous) {
    return {
      waiting: 'the frame carries no velocity: waiting for the next frame to infer it', velocityNotes: [],
      maps: {}, state: { previous: frame, history: nextHistory(smoothed(), []), ...keepFootpoints },
    };
  }
  const maxIntervalS = resolveVelocitySettings(settings.velocity).maxIntervalS;
  if (!hasVelocity(frame) && frame.time - state.previous!.time > 1000 * maxIntervalS) {
    // Too far apart to infer a velocity: this pair gives no sample (the budget marks the hole),
    // and the next pair starts from this frame.
    const dtS = (frame.time - state.previous!.time) / 1000;
    return {
      waiting: `${dtS} s since the previous frame, more than the ${maxIntervalS} s over which a velocity is inferred: no sample for this pair; the next pair starts here`,
      velocityNotes: [], maps: {}, state: { previous: frame, history: nextHistory(smoothed(), []), ...keepFootpoints },
    };
  }
  const fpSettings = settings.footpoints === false ? undefined : { ...settings.footpoints, ...(cache && { kernelCache: cache }) };
  const noise = settings.noiseG !== undefined ? { noiseG: settings.noiseG } : {};
  // The rate's noise level is the segmentation's estimate when it made one of the same map.
  const noiseOf = (tracked: TrackedFrame | undefined) => settings.noiseG === undefined && tracked?.seg.estimatedNoise !== undefined
    ? { noiseG: tracked.seg.estimatedNoise } : noise;

  if (hasVelocity(frame)) {
    const tracked = fpSettings && trackFrame(state.footpoints, frame, fpSettings);
    const centre = framePatchCentre(frame);
    const r = yield* measureRateSteps({ frame, labels: tracked ? tracked.labels : null, velocityMethod: 'given', ...noiseOf(tracked), ...(cache && { cache }), ...(centre && { centre }) });
    const footpoints = tracked && describeFootpoints(state.footpoints, frame, tracked, fpSettings!, {
      transport: r.transport, ...(r.split && { split: r.split }),
    });
    return {
      sample: r.sample, ...(footpoints && { footpoints }), velocityNotes: [],
      maps: { gTheta: r.gTheta, ...(footpoints && { labels: footpoints.labels }), vx: frame.vx, vy: frame.vy, ...(frame.vz && { vz: frame.vz }) },
      // The history goes on through frames that carry their velocity, so that a later pair
      // without one measures over the same frames whatever came before (and a restore agrees).
      // The segmentation smoothed this frame with the same width: its field is the history's.
      state: { previous: frame, history: nextHistory(tracked ? tracked.seg.field : smoothed()), ...(footpoints ? { footpoints: footpoints.state } : keepFootpoints) },
    };
  }

  const previous = state.previous!;
  // The pair's noise from its difference, when the footpoint motions below need it: found once
  // here, and given to the inference, which would otherwise find the same value again.
  const motionsNeedNoise = fpSettings !== undefined && (settings.motionModel ?? 'footpoints') === 'footpoints' && settings.noiseG === undefined;
  const pairNoiseG = motionsNeedNoise ? pairNoise(previous.bn, frame.bn) : undefined;
  // The inference needs only the pair: it runs beside the tracking and the motions below.
  const inference = yield* fork('inferVelocity', [previous, frame, settings.velocity, pairNoiseG]);
  const rateFrame = midFrame(previous, frame);
  const centre = meanCentre(framePatchCentre(previous), framePatchCentre(frame));
  const commonOf = (v: InferredVelocity, tracked?: TrackedFrame) => ({
    frame: rateFrame, velocityMethod: v.method, time: v.time, dtS: v.dtS, ...noiseOf(tracked), ...(cache && { cache }), ...(centre && { centre }),
  });
  const inferredOf = (v: InferredVelocity): VelocityMaps => ({ vx: v.vx, vy: v.vy, ...(v.vz && { vz: v.vz }) });
  // Without footpoint motions the 1-sigma covers the field noise only, not the inference's errors.
  const incomplete = 'sigma-without-velocity-error';
  const incompleteNote = 'The 1-sigma covers the field noise only: the errors of the inferred velocity are not in it (they are when the velocity is built from footpoint motions).';
  if (!fpSettings) {
    const v = yield* join(inference);
    const r = yield* measureRateSteps({ ...commonOf(v), velocity: inferredOf(v), labels: null, flags: [incomplete] });
    return {
      sample: r.sample, velocityNotes: [...v.notes, incompleteNote],
      maps: { gTheta: r.gTheta, vx: v.vx, vy: v.vy, ...(v.vz && { vz: v.vz }) },
      state: { previous: frame, ...keepFootpoints },
    };
  }
  const field1 = smoothed();
  const history = state.history ?? [];
  const kept = history.length > 0 && history[history.length - 1].time === previous.time ? history[history.length - 1].field : undefined;
  // Without missing pixels the smoothing is linear: the mid-time frame's smoothed field is the mean
  // of its two frames' (to rounding), which saves smoothing it anew.
  const midField = kept && !hasMissing(kept) && !hasMissing(field1) ? averageMaps(kept, field1) : undefined;
  const tracked = trackFrame(state.footpoints, rateFrame, fpSettings, midField);
  let labels = tracked.labels;
  let motions: ReturnType<typeof pairMotions> | undefined;
  let motionFrom = previous.time;
  const baselineNotes: string[] = [];
  const flags: string[] = [];
  const footpointModel = (settings.motionModel ?? 'footpoints') === 'footpoints';
  // The footpoint motions need no velocity: they are measured before the inference is joined.
  if (footpointModel) {
    // The footpoints' own motions from their patterns on the smoothed frames: over the pair, and
    // over the longest interval within the baseline where earlier frames are kept (preferred).
    const previousField = kept ?? smoothed(previous.bn);
    // The noise of each frame (robust, from their difference) sets the motions' errors.
    const frameNoise = settings.noiseG ?? pairNoiseG!; // found above whenever no noise is given
    const options = {
      noiseCorrelation: Math.max(1, 4 * Math.PI * smoothing * smoothing), coreShare: MOTION_CORE_SHARE,
      ...(Number.isFinite(frameNoise) && frameNoise > 0 && { noiseG: frameNoise }), ...fpSettings.rotation,
    };
    // Over the longest interval within the baseline first; over the pair for the footpoints whose
    // longer fit failed (or when no earlier frame is kept).
    const oldest = history.find((h) => frame.time - h.time <= 1000 * baselineS);
    motions = new Map();
    if (oldest && oldest.time < previous.time) {
      motions = pairMotions(oldest.field, field1, tracked.labels, tracked.grid, (frame.time - oldest.time) / 1000, options);
      motionFrom = oldest.time;
      baselineNotes.push(`Footpoint motions over ${((frame.time - oldest.time) / 1000).toFixed(0)} s (the motion baseline), centred ${((previous.time - oldest.time) / 2000).toFixed(0)} s before the sample.`);
    }
    // Over the pair for the footpoints the baseline did not give: the pair's interval as the
    // inference takes it (core/velocity/inferVelocity.ts checkFramePair), so no need to wait for it.
    const pairDtS = (frame.time - previous.time) / 1000;
    const missing = new Set(tracked.track.assignments.map((a) => a.id).filter((id) => !motions!.has(id)));
    if (missing.size > 0) {
      for (const [id, m] of pairMotions(previousField, field1, tracked.labels, tracked.grid, pairDtS, options, missing)) motions.set(id, m);
    }
  }
  const v = yield* join(inference);
  const inferred = inferredOf(v);
  let velocity: VelocityMaps = inferred;
  const notes = [...v.notes, ...baselineNotes];
  if (footpointModel && motions) {
    if (v.vz) {
      // With vector data, a footpoint whose pattern shows no rotation may still turn in the flux
      // transport: twist carried up by emerging flux moves its field lines around it (-v_n B_t),
      // which Bn cannot show but the vector estimator's transport does.
      for (const [id, m] of motions) {
        if (m.omega !== null) continue;
        const turn = transportRotation(tracked.grid, rateFrame, inferred, tracked.labels, id, m.cx, m.cy);
        if (turn) motions.set(id, { ...m, omega: turn.omega, omegaError: turn.omegaError, omegaNote: null });
      }
    }
    // Pixels under 3 noise units are noise, not flux that went without a velocity.
    const field = footpointVelocityField(tracked.grid, rateFrame.bn, tracked.labels, motions, inferred,
      { fieldFloorG: 3 * tracked.seg.noise, ...settings.footpointVelocity });
    velocity = { vx: field.vx, vy: field.vy };
    labels = field.labels;
    const round = [...motions.values()].filter((m) => m.omega === null).length;
    notes.push(`Footpoint motions measured from their patterns over the pair: ${motions.size} footpoints, ${round} without a visible rotation (no spin put on them).`);
    // The share of the footpoints' flux whose spin cannot be seen (round footpoints).
    let all = 0, unseen = 0;
    tracked.regions.forEach((r, k) => {
      const id = tracked.track.assignments[k].id;
      all += Math.abs(r.flux);
      if (motions!.get(id)?.omega == null) unseen += Math.abs(r.flux);
    });
    if (all > 0 && unseen > 0) {
      flags.push('spin-unobservable');
      notes.push(`${(100 * unseen / all).toFixed(0)}% of the footpoints' flux is in footpoints whose rotation cannot be seen (round, too small or too noisy): their spin is not in the spin rate; no bound can be given from the pattern.`);
    }
    if (field.leftOutFluxShare > LEFT_OUT_FLAG_SHARE) {
      flags.push('flux-left-out');
      notes.push(`${(100 * field.leftOutFluxShare).toFixed(1)}% of the unsigned flux (above 3 noise units) had no velocity (weak field away from footpoints) and was taken as still.`);
    }
  } else {
    flags.push(incomplete);
    notes.push(incompleteNote);
  }
  const r = yield* measureRateSteps({
    ...commonOf(v, tracked), velocity, labels, flags,
    ...(motions && { motions, motionFrom, motionTo: frame.time }),
    ...(motions && v.vz && { normalVelocity: v.vz }),
  });
  const footpoints = describeFootpoints(state.footpoints, rateFrame, tracked, fpSettings, {
    transport: r.transport, ...(r.split && { split: r.split }), ...(motions && { motions }),
  });
  return {
    sample: r.sample, footpoints, velocityNotes: notes,
    maps: { gTheta: r.gTheta, labels: footpoints.labels, vx: velocity.vx, vy: velocity.vy, ...(v.vz && { vz: v.vz }) },
    state: { previous: frame, history: nextHistory(field1), footpoints: footpoints.state },
  };
}

/** Whether a map has a NaN (no data) pixel. */
function hasMissing(map: Float64Array): boolean {
  for (let i = 0; i < map.length; i++) if (map[i] !== map[i]) return true;
  return false;
}
