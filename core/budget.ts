// The helicity budget: the running time integral of every rate component over an irregular
// cadence, by the trapezoid rule. Gaps (an interval longer than `gapFactor` times the median of
// the intervals seen so far) are never bridged silently: a gap is recorded, and unless the
// region's setting `bridgeGaps` says otherwise the integral does not cross it (the budget holds
// its value over the gap). The 1-sigma of the budget comes from the per-sample sigmas:
// budget = Sum_i w_i r_i with trapezoid weights w_i, so Var = Sum_ij w_i w_j Cov(r_i, r_j), with
// two kinds of error told apart by the sample:
// - field noise (sigmaTotal without sigmaMotion): samples with given velocities are independent;
//   samples of consecutive frame pairs share a frame, so their rates from the mid-time field
//   (the average of the pair) correlate by 1/2 and Var adds 2 * 1/2 * w_i s_i w_{i+1} s_{i+1};
// - footpoint motions (sigmaMotion): a motion is a displacement between the frames at
//   `motionFrom` and `motionTo` divided by their interval, so its error is the difference of two
//   position errors, one per frame, and the errors of samples that share a frame do not add up
//   independently (for a steady sigma they telescope: the integral keeps the end frames' errors).
//   With a_i = w_i s_i / sqrt 2 (each frame's share), each frame f collects c_f = Sum of a_i over the
//   samples ending at f minus the sum over those starting at f, and Var = Sum_f c_f^2. This takes
//   the sensitivities of successive samples to have one sign, as for a steadily moving region.
// Pure: the state goes in and comes out as a plain object (it is stored with every point).

import { median as medianOf } from './quantile.js';
import type { RateSample } from './rateSample.js';

/** The integrated components, in the order they are reported. */
export const BUDGET_COMPONENTS = ['total', 'spin', 'orbit', 'background', 'totalGa', 'emergence', 'shear'] as const;
export type BudgetComponent = (typeof BUDGET_COMPONENTS)[number];

export interface BudgetSettings {
  /** An interval longer than this many median cadences is a gap. Default 3. */
  readonly gapFactor?: number;
  /** Integrate across gaps anyway (trapezoid over the gap); the gap is still recorded. Default false. */
  readonly bridgeGaps?: boolean;
  /** Intervals needed before the median cadence is trusted for gap detection. Default 3. */
  readonly minIntervals?: number;
  /** Expected cadence, s: used for gap detection until enough intervals are known. */
  readonly cadenceS?: number;
}

export const BUDGET_DEFAULTS = { gapFactor: 3, bridgeGaps: false, minIntervals: 3 } as const;

export interface BudgetGap {
  /** UTC ms of the samples on each side of the gap. */
  readonly from: number;
  readonly to: number;
  /** True when the integral was carried across it (the setting at that time). */
  readonly bridged: boolean;
  /** Median cadence the gap was judged against, s. */
  readonly medianCadenceS: number;
}

export interface BudgetPoint {
  readonly time: number;
  /** Running integrals, Mx^2. `emergence` and `shear` are NaN until a sample carries them. */
  readonly values: Readonly<Record<BudgetComponent, number>>;
  /** 1-sigma of the total budget, Mx^2. */
  readonly sigmaTotal: number;
  /** The gap just before this point, when there was one. */
  readonly gap?: BudgetGap;
  /** Samples integrated so far (this one included). */
  readonly count: number;
}

export interface BudgetState {
  readonly count: number;
  readonly lastTime?: number;
  /** Rates of the last sample (for the next trapezoid), Mx^2/s. */
  readonly lastRates?: Readonly<Record<BudgetComponent, number>>;
  readonly lastSigma?: number;
  /** Interval of the last sample's frame pair, s (0 when its frame carried the velocity). */
  readonly lastDtS?: number;
  readonly values: Readonly<Record<BudgetComponent, number>>;
  /** Sum of w_i^2 s_i^2 over samples whose weight is final. */
  readonly closedVariance: number;
  /** Trapezoid weight of the last sample so far, s. */
  readonly pendingWeight: number;
  /** The last sample's field-noise and motion sigmas, its span in samples, and whether it continues the previous pair. */
  readonly lastNoiseSigma?: number;
  readonly lastMotionSigma?: number;
  /** w s of the field noise of the sample before the last (for the correlation of shared frames), Mx^2. */
  readonly previousNoiseTerm?: number;
  /** The last sample's motion interval, UTC ms. */
  readonly lastMotionFrom?: number;
  readonly lastMotionTo?: number;
  /** c_f of frames that later samples can still reach, by frame time (UTC ms), Mx^2. */
  readonly motionOpen?: Readonly<Record<string, number>>;
  /** Sum of c_f^2 of frames no later sample can reach, Mx^4. */
  readonly motionClosed?: number;
  /** Intervals seen so far, s (bounded; the median is taken over the most recent ones). */
  readonly intervals: readonly number[];
  readonly gaps: readonly BudgetGap[];
}

const MAX_INTERVALS = 256;

/** Correlation of the field-noise errors of two samples whose frame pairs share one frame. */
export const SHARED_FRAME_CORRELATION = 0.5;

/** Adds a sample's motion share a to its end frame and takes it from its start frame. */
function addMotionShare(open: Record<string, number>, from: number | undefined, to: number | undefined, a: number): void {
  if (from === undefined || to === undefined || !(a > 0)) return;
  open[to] = (open[to] ?? 0) + a;
  open[from] = (open[from] ?? 0) - a;
}

export function emptyBudget(): BudgetState {
  return {
    count: 0,
    values: { total: 0, spin: 0, orbit: 0, background: 0, totalGa: 0, emergence: NaN, shear: NaN },
    closedVariance: 0,
    pendingWeight: 0,
    intervals: [],
    gaps: [],
  };
}

function ratesOf(s: RateSample): Record<BudgetComponent, number> {
  return {
    total: s.total, spin: s.spin, orbit: s.orbit, background: s.background, totalGa: s.totalGa,
    emergence: s.emergence ?? NaN, shear: s.shear ?? NaN,
  };
}

/** The median cadence the next interval is judged against, s (NaN while unknown). */
export function medianCadence(state: BudgetState, settings: BudgetSettings = {}): number {
  const minIntervals = settings.minIntervals ?? BUDGET_DEFAULTS.minIntervals;
  if (state.intervals.length >= minIntervals) return medianOf(state.intervals);
  return settings.cadenceS ?? NaN;
}

function checkRate(name: string, v: number, time: number): void {
  if (name === 'emergence' || name === 'shear') return;
  if (!Number.isFinite(v)) throw new RangeError(`budget: sample at ${new Date(time).toISOString()} has a non-finite ${name} rate`);
}

/**
 * Adds one sample (samples must come in time order). Returns the new point and state.
 * A sample not after the previous one is an error (ordering is the caller's job).
 */
export function accumulateBudget(
  state: BudgetState, sample: RateSample, settings: BudgetSettings = {},
): { point: BudgetPoint; state: BudgetState } {
  const rates = ratesOf(sample);
  for (const name of BUDGET_COMPONENTS) checkRate(name, rates[name], sample.time);
  const sigma = Number.isFinite(sample.sigmaTotal) ? sample.sigmaTotal : 0;
  const motionSigma = Number.isFinite(sample.sigmaMotion) ? Math.min(sample.sigmaMotion, sigma) : 0;
  const noiseSigma = Math.sqrt(Math.max(0, sigma * sigma - motionSigma * motionSigma));
  const errors = { lastNoiseSigma: noiseSigma, lastMotionSigma: motionSigma };
  if (state.lastTime === undefined || state.lastRates === undefined) {
    const values = { ...state.values };
    // A component first seen here starts at 0 (nothing integrated yet).
    if (Number.isFinite(rates.emergence) && !Number.isFinite(values.emergence)) values.emergence = 0;
    if (Number.isFinite(rates.shear) && !Number.isFinite(values.shear)) values.shear = 0;
    const next: BudgetState = {
      ...state, count: state.count + 1, lastTime: sample.time, lastRates: rates, lastSigma: sigma, values,
      pendingWeight: 0, ...errors, previousNoiseTerm: 0, lastDtS: sample.dtS,
      ...(sample.motionFrom !== undefined && { lastMotionFrom: sample.motionFrom }),
      ...(sample.motionTo !== undefined && { lastMotionTo: sample.motionTo }),
    };
    return { point: { time: sample.time, values, sigmaTotal: Math.sqrt(state.closedVariance + (state.motionClosed ?? 0)), count: next.count }, state: next };
  }
  const dtS = (sample.time - state.lastTime) / 1000;
  if (!(dtS > 0)) {
    throw new RangeError(`budget: sample at ${new Date(sample.time).toISOString()} is not after the previous one`);
  }
  const median = medianCadence(state, settings);
  const gapFactor = settings.gapFactor ?? BUDGET_DEFAULTS.gapFactor;
  const isGap = Number.isFinite(median) && dtS > gapFactor * median;
  const bridge = settings.bridgeGaps ?? BUDGET_DEFAULTS.bridgeGaps;
  const integrate = !isGap || bridge;
  const values = { ...state.values };
  const prev = state.lastRates;
  for (const name of BUDGET_COMPONENTS) {
    const a = prev[name], b = rates[name];
    if (!Number.isFinite(b)) continue;
    if (!Number.isFinite(values[name])) values[name] = 0;
    // A component missing on one side contributes nothing for that interval.
    if (integrate && Number.isFinite(a)) values[name] += 0.5 * (a + b) * dtS;
  }
  // The last sample's weight is final now: its field-noise term (with the correlation to the one
  // before when they share a frame) closes; its motion term joins the run's window.
  const lastNoise = state.lastNoiseSigma ?? state.lastSigma ?? 0;
  const lastMotion = state.lastMotionSigma ?? 0;
  const lastWeight = state.pendingWeight + (integrate ? 0.5 * dtS : 0);
  const noiseTerm = lastWeight * lastNoise;
  const closedVariance = state.closedVariance + noiseTerm ** 2 + 2 * SHARED_FRAME_CORRELATION * (state.previousNoiseTerm ?? 0) * noiseTerm;
  const pendingWeight = integrate ? 0.5 * dtS : 0;
  // This sample continues the previous pair when its first frame is the previous sample's second.
  const continues = integrate && sample.dtS > 0 && (state.lastDtS ?? 0) > 0
    && Math.abs(sample.time - 500 * sample.dtS - (state.lastTime + 500 * (state.lastDtS ?? 0))) < 1;
  // The last sample's motion share is final: it goes to its two frames; frames older than this
  // sample's own start cannot be reached by it or any later sample (starts only move forward).
  const open: Record<string, number> = { ...(state.motionOpen ?? {}) };
  addMotionShare(open, state.lastMotionFrom, state.lastMotionTo, (lastWeight * lastMotion) / Math.SQRT2);
  let motionClosed = state.motionClosed ?? 0;
  const reach = sample.motionFrom ?? sample.time;
  for (const key of Object.keys(open)) {
    if (Number(key) < reach) { motionClosed += open[key] ** 2; delete open[key]; }
  }
  const gap: BudgetGap | undefined = isGap
    ? { from: state.lastTime, to: sample.time, bridged: bridge, medianCadenceS: median }
    : undefined;
  // Gaps do not enter the cadence statistics, so a long outage does not raise the median.
  const intervals = isGap ? state.intervals : [...state.intervals, dtS].slice(-MAX_INTERVALS);
  const next: BudgetState = {
    count: state.count + 1,
    lastTime: sample.time,
    lastRates: rates,
    lastSigma: sigma,
    lastDtS: sample.dtS,
    values,
    closedVariance,
    pendingWeight,
    intervals,
    gaps: gap ? [...state.gaps, gap] : state.gaps,
    ...errors,
    previousNoiseTerm: continues ? noiseTerm : 0,
    ...(sample.motionFrom !== undefined && { lastMotionFrom: sample.motionFrom }),
    ...(sample.motionTo !== undefined && { lastMotionTo: sample.motionTo }),
    motionOpen: open,
    motionClosed,
  };
  const pendingNoise = pendingWeight * noiseSigma;
  const withPending = { ...open };
  addMotionShare(withPending, sample.motionFrom, sample.motionTo, (pendingWeight * motionSigma) / Math.SQRT2);
  let motionOpenVariance = 0;
  for (const v of Object.values(withPending)) motionOpenVariance += v * v;
  const sigmaTotal = Math.sqrt(closedVariance + pendingNoise ** 2 + 2 * SHARED_FRAME_CORRELATION * next.previousNoiseTerm! * pendingNoise
    + motionClosed + motionOpenVariance);
  return { point: { time: sample.time, values, sigmaTotal, count: next.count, ...(gap && { gap }) }, state: next };
}
