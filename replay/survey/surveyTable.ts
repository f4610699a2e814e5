// The survey table: one row per region (frames used, gaps, peak |dH/dt| with its time, the final
// budget with its 1-sigma, the spin and orbit shares of it, the unsigned flux Phi and H/Phi^2 at
// the last sample, which alert thresholds were crossed and when), or the reason a region has no
// result. Pure: from a region's series (replay/archiveSeries.ts).

import type { RulesState } from '../../core/alerts/evaluateRules.js';
import { alertRecords } from '../../core/alerts/evaluateRules.js';
import { csvCell } from '../../core/seriesColumns.js';
import type { ArchiveSeries } from '../archiveSeries.js';

export const SURVEY_COLUMNS = [
  'region', 'status', 'problem', 'frames_planned', 'frames_used', 'frames_skipped', 'samples', 'gaps', 'first_time', 'last_time',
  'peak_rate', 'peak_rate_sigma', 'peak_rate_time', 'budget_total', 'budget_sigma', 'spin_share', 'orbit_share',
  'flux_unsigned', 'budget_normalised', 'thresholds_crossed',
] as const;

/** ok: merged; incomplete: some task has no complete result; no-data: nothing to analyse. */
export type RegionStatus = 'ok' | 'incomplete' | 'no-data';

export interface ThresholdCrossing {
  /** The alert rule (core/alerts/ruleCatalogue.ts). */
  readonly rule: string;
  /** When the alert was raised, ISO 8601 UTC. */
  readonly time: string;
  readonly threshold: number;
  readonly unit: string;
}

export interface SurveyRow {
  readonly region: string;
  readonly status: RegionStatus;
  /** Why the region has no result, or the files it skipped and why (status ok). */
  readonly problem: string | null;
  /** Usable frames found by the plan's scan. */
  readonly frames_planned: number;
  readonly frames_used: number | null;
  /** Files set aside (at the scan or at the analysis), each reported in the region's JSON. */
  readonly frames_skipped: number | null;
  readonly samples: number | null;
  /** Intervals marked as gaps by the budget. */
  readonly gaps: number | null;
  readonly first_time: string | null;
  readonly last_time: string | null;
  /** The rate of largest |dH/dt|, Mx^2/s (signed), its 1-sigma and time. */
  readonly peak_rate: number | null;
  readonly peak_rate_sigma: number | null;
  readonly peak_rate_time: string | null;
  /** The accumulated budget at the last sample, Mx^2, and its 1-sigma. */
  readonly budget_total: number | null;
  readonly budget_sigma: number | null;
  /** budget_spin / budget_total and budget_orbit / budget_total at the last sample. */
  readonly spin_share: number | null;
  readonly orbit_share: number | null;
  /** Unsigned flux at the last sample, Mx; the budget over its square. */
  readonly flux_unsigned: number | null;
  readonly budget_normalised: number | null;
  readonly thresholds_crossed: readonly ThresholdCrossing[];
}

/** Rules on the data rather than on the Sun: their story is in `gaps` and `frames_skipped`. */
const DATA_RULES = new Set(['data-gap', 'refusals']);

/** Every raising of an alert rule on the Sun, in time order. */
export function thresholdCrossings(rules: RulesState): ThresholdCrossing[] {
  return alertRecords(rules)
    .filter((rec) => !DATA_RULES.has(rec.rule))
    .flatMap((rec) => rec.history.filter((h) => h.to === 'raised').map((h) => ({ rule: rec.rule, time: h.time, threshold: rec.threshold, unit: rec.unit })))
    .sort((p, q) => (p.time < q.time ? -1 : p.time > q.time ? 1 : 0));
}

const share = (part: number, whole: number) => (whole !== 0 && Number.isFinite(part / whole) ? part / whole : null);

export function regionRow(region: string, planned: number, a: ArchiveSeries): SurveyRow {
  const rows = a.series.rows;
  const last = rows.at(-1);
  let peak = rows[0];
  for (const r of rows) if (Math.abs(r.rate_total) > Math.abs(peak.rate_total)) peak = r;
  const crossings = thresholdCrossings(a.series.state.rules);
  const shown = a.skipped.slice(0, 3).map((f) => `${f.file}: ${f.reason}`);
  const problem = a.skipped.length === 0 ? null
    : `skipped ${a.skipped.length} file(s): ${shown.join('; ')}${a.skipped.length > shown.length ? `; and ${a.skipped.length - shown.length} more (in the region's JSON)` : ''}`;
  return {
    region, status: 'ok', problem, frames_planned: planned, frames_used: a.used, frames_skipped: a.skipped.length, samples: rows.length,
    gaps: a.series.state.budget.gaps.length, first_time: rows[0]?.time ?? null, last_time: last?.time ?? null,
    peak_rate: peak?.rate_total ?? null, peak_rate_sigma: peak?.sigma_rate_total ?? null, peak_rate_time: peak?.time ?? null,
    budget_total: last?.budget_total ?? null, budget_sigma: last?.sigma_budget_total ?? null,
    spin_share: last ? share(last.budget_spin, last.budget_total) : null, orbit_share: last ? share(last.budget_orbit, last.budget_total) : null,
    flux_unsigned: last?.flux_unsigned ?? null, budget_normalised: last?.budget_normalised ?? null,
    thresholds_crossed: crossings,
  };
}

/** The row of a region without a result, with the reason. */
export function problemRow(region: string, status: Exclude<RegionStatus, 'ok'>, problem: string, planned: number, skipped: number | null): SurveyRow {
  return {
    region, status, problem, frames_planned: planned, frames_used: null, frames_skipped: skipped, samples: null, gaps: null,
    first_time: null, last_time: null, peak_rate: null, peak_rate_sigma: null, peak_rate_time: null, budget_total: null, budget_sigma: null,
    spin_share: null, orbit_share: null, flux_unsigned: null, budget_normalised: null, thresholds_crossed: [],
  };
}

/** CSV of the survey table; a crossing is "rule@time", several joined by ';'. */
export function surveyCsv(rows: readonly SurveyRow[]): string {
  const lines = [SURVEY_COLUMNS.join(',')];
  for (const r of rows) {
    lines.push(SURVEY_COLUMNS.map((c) => (c === 'thresholds_crossed' ? csvCell(r.thresholds_crossed.map((x) => `${x.rule}@${x.time}`)) : csvCell(r[c]))).join(','));
  }
  return lines.join('\n') + '\n';
}
