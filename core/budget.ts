// The helicity budget: the running time integral of every rate component over an irregular
// cadence, by the trapezoid rule. Gaps (an interval longer than `gapFactor` times the median of
// the intervals seen so far) are never bridged silently: a gap is recorded, and unless the
// region's setting `bridgeGaps` says otherwise the integral does not cross it (the budget holds
// its value over the gap). The 1-sigma of the budget comes from the per-sample sigmas, taken as
// independent: budget = Sum_i w_i r_i with trapezoid weights w_i, so Var = Sum_i w_i^2 s_i^2.
// Pure: the state goes in and comes out as a plain object (it is stored with every point).

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
  readonly values: Readonly<Record<BudgetComponent, number>>;
  /** Sum of w_i^2 s_i^2 over samples whose weight is final. */
  readonly closedVariance: number;
  /** Trapezoid weight of the last sample so far, s. */
  readonly pendingWeight: number;
  /** Intervals seen so far, s (bounded; the median is taken over the most recent ones). */
  readonly intervals: readonly number[];
  readonly gaps: readonly BudgetGap[];
}

const MAX_INTERVALS = 256;

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

function medianOf(values: readonly number[]): number {
  const a = [...values].sort((p, q) => p - q);
  const m = a.length >> 1;
  return a.length % 2 ? a[m] : 0.5 * (a[m - 1] + a[m]);
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
  if (state.lastTime === undefined || state.lastRates === undefined) {
    const values = { ...state.values };
    // A component first seen here starts at 0 (nothing integrated yet).
    if (Number.isFinite(rates.emergence) && !Number.isFinite(values.emergence)) values.emergence = 0;
    if (Number.isFinite(rates.shear) && !Number.isFinite(values.shear)) values.shear = 0;
    const next: BudgetState = {
      ...state, count: state.count + 1, lastTime: sample.time, lastRates: rates, lastSigma: sigma, values,
      pendingWeight: 0,
    };
    return { point: { time: sample.time, values, sigmaTotal: Math.sqrt(state.closedVariance), count: next.count }, state: next };
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
  const lastSigma = state.lastSigma ?? 0;
  const lastWeight = state.pendingWeight + (integrate ? 0.5 * dtS : 0);
  const closedVariance = state.closedVariance + (lastWeight * lastSigma) ** 2;
  const pendingWeight = integrate ? 0.5 * dtS : 0;
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
    values,
    closedVariance,
    pendingWeight,
    intervals,
    gaps: gap ? [...state.gaps, gap] : state.gaps,
  };
  const sigmaTotal = Math.sqrt(closedVariance + (pendingWeight * sigma) ** 2);
  return { point: { time: sample.time, values, sigmaTotal, count: next.count, ...(gap && { gap }) }, state: next };
}
