// One accumulation step: a rate sample -> the helicity budget (core/budget.ts) -> the alert rules
// (core/alerts/evaluateRules.ts) -> the series row (core/seriesColumns.ts), with the `after-gap`
// flag on the first row after a gap the budget marked. The live monitor (server/pipeline.ts) and
// the batch (replay/processCommand.ts) both take this step, so their series cannot drift apart.
// Refusals feed the data rules on their own (`accumulateRefusal`), when they happen.
// Pure: the state goes in and comes out as a plain object (the monitor stores it with every frame).
//
//   let state = emptyAccumulation();
//   const step = accumulate(state, sample, { budget: { gapFactor: 3 }, rules: {} }, { frameId: 7 });
//   state = step.state; // step.row: the series row; step.changes: the alert changes it made

import type { AlertChange, AlertRecord } from './alerts/alertState.js';
import type { RulesState } from './alerts/evaluateRules.js';
import { emptyRules, evaluateRules } from './alerts/evaluateRules.js';
import type { RuleOverrides } from './alerts/ruleCatalogue.js';
import type { BudgetPoint, BudgetSettings, BudgetState } from './budget.js';
import { accumulateBudget, emptyBudget } from './budget.js';
import type { PatchCentre } from './frameAssembly/wcs.js';
import { upperMedian } from './quantile.js';
import type { RateSample } from './rateSample.js';
import type { SeriesRow } from './seriesColumns.js';
import { seriesRow } from './seriesColumns.js';
import type { SphereBudgetState } from './sphere/sphereColumns.js';
import { accumulateSphere, emptySphereBudget } from './sphere/sphereColumns.js';

/** What one step carries to the next: the budget and the rule memory (and a spherical region's budgets). */
export interface AccumulationState {
  readonly budget: BudgetState;
  readonly rules: RulesState;
  /** The rotation share's and the hemispheres' budgets, from the first sample on the sphere on (core/sphere/sphereColumns.ts). */
  readonly sphere?: SphereBudgetState;
}

export interface AccumulationSettings {
  readonly budget?: BudgetSettings;
  readonly rules?: RuleOverrides;
}

/** Where the sample came from, for its row: the frame's id and the patch centre (the sample's own by default). */
export interface SampleOrigin {
  readonly frameId?: number | null;
  readonly centre?: PatchCentre;
}

export interface AlertStep {
  readonly alert: AlertRecord;
  readonly change: AlertChange;
}

export interface AccumulationStep {
  readonly state: AccumulationState;
  /** The series row of the sample, flagged `after-gap` when the budget marked a gap before it. */
  readonly row: SeriesRow;
  /** The budget point after the sample. */
  readonly point: BudgetPoint;
  /** Alert changes the sample made, with the alert after each. */
  readonly changes: readonly AlertStep[];
}

export function emptyAccumulation(): AccumulationState {
  return { budget: emptyBudget(), rules: emptyRules() };
}

/**
 * Adds one sample (samples in time order). Throws the budget's RangeError for a sample not after
 * the previous one or with a non-finite rate, before anything else is evaluated.
 * accumulate(emptyAccumulation(), sample, {}).row.budget_total === 0 (one sample integrates nothing yet)
 */
export function accumulate(state: AccumulationState, sample: RateSample, settings: AccumulationSettings = {}, origin: SampleOrigin = {}): AccumulationStep {
  const b = accumulateBudget(state.budget, sample, settings.budget);
  const point = b.point;
  const rules = evaluateRules(state.rules, {
    time: sample.time, rate: sample.total, sigmaRate: sample.sigmaTotal,
    budget: point.values.total, sigmaBudget: point.sigmaTotal,
    ...(point.gap && { gap: point.gap }),
  }, { rules: settings.rules ?? {} });
  const flat = seriesRow(sample, point, origin.frameId ?? null, origin.centre ?? sample.centre);
  // A sample on the sphere adds its columns (same budget settings, so the same gaps); planar rows leave them out.
  const sphere = sample.sphere && accumulateSphere(state.sphere ?? emptySphereBudget(), sample.time, sample.sphere, settings.budget);
  const row = sphere ? { ...flat, ...sphere.columns } : flat;
  return {
    state: { ...state, budget: b.state, rules: rules.state, ...(sphere && { sphere: sphere.state }) },
    // The budget marks a gap on the first sample after it.
    row: point.gap ? { ...row, flags: [...row.flags, 'after-gap'] } : row,
    point,
    changes: rules.changes,
  };
}

/**
 * A refusal at `time` seen by the data rules, with the times of the refusals in the rule's window
 * (this one included). The budget is untouched.
 * accumulateRefusal(emptyAccumulation(), t, [t], {}).state.rules.machines.refusals  // the refusals rule's state
 */
export function accumulateRefusal(state: AccumulationState, time: number, refusalTimes: readonly number[], settings: AccumulationSettings = {}): { state: AccumulationState; changes: readonly AlertStep[] } {
  const step = evaluateRules(state.rules, { time, refusalTimes }, { rules: settings.rules ?? {} });
  return { state: { ...state, rules: step.state }, changes: step.changes };
}

/**
 * The cadence a series is reported with, s: the upper median of its intervals (one of them, a real
 * step); undefined when there is none. The budget judges gaps against its own running median
 * (core/budget.ts medianCadence).
 * seriesCadenceS([60, 60, 720]) === 60; seriesCadenceS([]) === undefined
 */
export function seriesCadenceS(intervalsS: readonly number[]): number | undefined {
  const m = upperMedian(intervalsS);
  return Number.isNaN(m) ? undefined : m;
}

/** Intervals between successive times (UTC ms, in order), s. intervalsS([0, 60_000, 180_000]) -> [60, 120] */
export function intervalsS(times: readonly number[]): number[] {
  return times.slice(1).map((t, i) => (t - times[i]) / 1000);
}
