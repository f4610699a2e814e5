// Evaluates every enabled rule of a region on one input (a rate sample with the budget after
// it, or a refusal) and returns the new alert states and the changes. Pure: the rule memory goes
// in and comes out as a plain object the server stores with each processed frame.

import type { AlertChange, AlertMachine, AlertRecord, ConditionReading, Evidence } from './alertState.js';
import { newAlertMachine, stepAlert } from './alertState.js';
import type { BuildUpState } from './buildUpTracker.js';
import { trackBuildUp, viewBuildUp } from './buildUpTracker.js';
import type { RuleDefinition, RuleOverrides, RuleParams } from './ruleCatalogue.js';
import { RULES, ruleParams } from './ruleCatalogue.js';

export interface RuleInput {
  /** UTC ms. */
  readonly time: number;
  /** From a rate sample and the budget point after it (absent for a refusal). */
  readonly rate?: number;
  readonly sigmaRate?: number;
  readonly budget?: number;
  readonly sigmaBudget?: number;
  /** The gap just before this sample, when the budget marked one. */
  readonly gap?: { readonly from: number; readonly to: number; readonly bridged: boolean };
  /** Times (UTC ms) of recent refusals, for the refusals rule. */
  readonly refusalTimes?: readonly number[];
}

export interface RulesState {
  readonly machines: Readonly<Record<string, AlertMachine>>;
  readonly buildUp?: BuildUpState;
  /** Time of the last sample input (for evidence windows). */
  readonly lastSampleTime?: number;
}

export interface RulesSettings {
  readonly rules?: RuleOverrides;
}

export function emptyRules(): RulesState {
  return { machines: {} };
}

const iso = (t: number) => new Date(t).toISOString();

/**
 * A threshold reading: met when the value stands above the threshold by sigmaFactor times its
 * 1-sigma (so noise does not raise it), gone when it falls below the hysteresis band.
 */
function reading(value: number, sigma: number, threshold: number, p: RuleParams, from: number, to: number): ConditionReading {
  const k = Number(p.sigmaFactor ?? 0);
  const s = Number.isFinite(sigma) ? sigma : 0;
  const evidence: Evidence = { value, window_from: iso(from), window_to: iso(to), threshold, sigma: s, sigma_factor: k };
  return { met: value - k * s > threshold, gone: value < threshold * (1 - p.hysteresis), evidence };
}

/** The condition of one rule on one input, or undefined when the input does not concern it. */
function readRule(def: RuleDefinition, p: RuleParams, input: RuleInput, state: RulesState, buildUp: BuildUpState | undefined): ConditionReading | undefined {
  const hasSample = input.rate !== undefined && input.budget !== undefined;
  const from = state.lastSampleTime ?? input.time;
  switch (def.id) {
    case 'budget':
    case 'budget-emerging':
      if (!hasSample) return undefined;
      return reading(Math.abs(input.budget!), input.sigmaBudget ?? 0, p.threshold, p, input.time, input.time);
    case 'peak-rate':
      if (!hasSample) return undefined;
      return reading(Math.abs(input.rate!), input.sigmaRate ?? 0, p.threshold, p, from, input.time);
    case 'build-up-plateau': {
      if (!hasSample || !buildUp) return undefined;
      const v = viewBuildUp(buildUp, input.time);
      const phaseS = (v.phaseTo - v.phaseFrom) / 1000;
      const plateauS = Number(p.plateauS), minPhaseS = Number(p.minPhaseS);
      const inPlateau = v.plateauS >= plateauS && phaseS >= minPhaseS;
      const evidence: Evidence = {
        value: v.accumulated, window_from: iso(v.phaseFrom), window_to: iso(v.phaseTo), threshold: p.threshold,
        plateau_s: v.plateauS, phase_s: phaseS, sign: v.sign,
        within_published_range: v.accumulated >= p.threshold && v.accumulated <= Number(p.upper),
      };
      return {
        met: inPlateau && v.accumulated > p.threshold,
        // The plateau is over once the budget moves again (a new peak or a fall back).
        gone: v.plateauS < plateauS || v.accumulated < p.threshold * (1 - p.hysteresis),
        evidence,
      };
    }
    case 'sign-reversal': {
      if (!hasSample) return undefined;
      const b = input.budget!, r = input.rate!, s = input.sigmaRate ?? 0;
      // Below the floor the budget's sign is too small to say which way the region is wound.
      const against = Math.abs(b) >= Number(p.budgetFloor ?? 0) && b !== 0 && Math.sign(r) === -Math.sign(b);
      const margin = Math.max(p.threshold, Number(p.sigmaFactor) * s);
      const value = against ? Math.abs(r) : 0;
      return {
        met: against && Math.abs(r) > margin,
        gone: !against,
        evidence: { value, window_from: iso(from), window_to: iso(input.time), threshold: margin, rate: r, budget: b, sigma: s, budget_floor: Number(p.budgetFloor ?? 0) },
      };
    }
    case 'data-gap': {
      if (!hasSample) return undefined;
      const g = input.gap;
      const value = g ? (g.to - g.from) / 1000 : 0;
      return {
        met: g !== undefined,
        gone: g === undefined,
        evidence: { value, window_from: iso(g?.from ?? input.time), window_to: iso(g?.to ?? input.time), threshold: 0, bridged: g?.bridged ?? null },
      };
    }
    case 'refusals': {
      if (!input.refusalTimes) return undefined;
      const windowS = Number(p.windowS);
      const since = input.time - windowS * 1000;
      const recent = input.refusalTimes.filter((t) => t > since && t <= input.time).length;
      const evidence: Evidence = { value: recent, window_from: iso(since), window_to: iso(input.time), threshold: p.threshold };
      return { met: recent >= p.threshold, gone: recent < p.threshold, evidence };
    }
  }
}

export interface RulesStep {
  readonly state: RulesState;
  /** Changes made by this input, with the alert after each. */
  readonly changes: readonly { readonly alert: AlertRecord; readonly change: AlertChange }[];
}

/** Applies one input to every enabled rule. */
export function evaluateRules(state: RulesState, input: RuleInput, settings: RulesSettings = {}): RulesStep {
  const machines: Record<string, AlertMachine> = { ...state.machines };
  const changes: { alert: AlertRecord; change: AlertChange }[] = [];
  const hasSample = input.rate !== undefined && input.budget !== undefined;
  const plateauParams = ruleParams(RULES.find((r) => r.id === 'build-up-plateau')!, settings.rules);
  const buildUp = hasSample ? trackBuildUp(state.buildUp, input.time, input.budget!, Number(plateauParams.plateauBand)) : state.buildUp;
  for (const def of RULES) {
    const p = ruleParams(def, settings.rules);
    if (!p.enabled) continue;
    const r = readRule(def, p, input, state, buildUp);
    if (!r) continue;
    const before = machines[def.id] ?? newAlertMachine(def.id, def.id, p.threshold, def.unit, def.source, input.time);
    const after = stepAlert(before, r, input.time, p);
    const added = after.record.history.length - before.record.history.length;
    const fresh = after.record.history.slice(after.record.history.length - Math.max(0, added));
    for (const change of fresh) changes.push({ alert: after.record, change });
    // A history at its limit drops old entries: compare the last entries instead.
    if (added <= 0 && after.record.history.at(-1) !== before.record.history.at(-1)) {
      changes.push({ alert: after.record, change: after.record.history.at(-1)! });
    }
    machines[def.id] = { ...after, record: { ...after.record, threshold: p.threshold } };
  }
  return {
    state: { machines, ...(buildUp && { buildUp }), ...(hasSample ? { lastSampleTime: input.time } : state.lastSampleTime !== undefined && { lastSampleTime: state.lastSampleTime }) },
    changes,
  };
}

/** The alert records of a rules state, in catalogue order. */
export function alertRecords(state: RulesState): AlertRecord[] {
  return RULES.map((r) => state.machines[r.id]?.record).filter((x): x is AlertRecord => x !== undefined);
}
