// What the charts draw for alerts: threshold lines and the moments a rule was raised. Thresholds
// come from the alerts the monitor sends (its configured rules); before any alert exists the budget
// chart shows the two published defaults so the reader sees where the region stands.

import type { WireAlert } from './wire.js';
import { isoToMs } from './seriesMerge.js';
import { ruleShortName } from './alertWords.js';

export interface ThresholdLine {
  value: number;
  label: string;
  source: string;
}

export interface AlertMoment {
  /** UTC ms. */
  t: number;
  alertId: string | number;
  rule: string;
  /** The rule in a few words, for the marker's label. */
  label: string;
}

/** Published defaults for accumulated |H| (sources as in README.md's alert table). */
export const DEFAULT_BUDGET_THRESHOLDS: readonly ThresholdLine[] = [
  { value: 2e42, label: 'eruptive regions', source: 'Tziotziou, Georgoulis & Raouafi 2012' },
  { value: 9e41, label: 'emerging regions', source: 'Liokati et al. 2022' },
];

/** Normalises a unit string for comparison: Mx^2, Mx², mx2 all become mx2; /s stays. */
function unitKey(unit: string): string {
  return unit.toLowerCase().replace(/\s+/g, '').replace(/\*\*2|\^2|²/g, '2');
}

export function isBudgetUnit(unit: string): boolean {
  return unitKey(unit) === 'mx2';
}

export function isRateUnit(unit: string): boolean {
  const k = unitKey(unit);
  return k === 'mx2/s' || k === 'mx2s-1' || k === 'mx2s^-1';
}

function linesFrom(alerts: readonly WireAlert[], pick: (unit: string) => boolean): ThresholdLine[] {
  const seen = new Set<number>();
  const out: ThresholdLine[] = [];
  for (const a of alerts) {
    if (a.threshold === null || !Number.isFinite(a.threshold) || !pick(a.unit ?? '')) continue;
    const v = Math.abs(a.threshold);
    // A zero threshold (a sign rule) is no level to draw.
    if (v === 0) continue;
    if (seen.has(v)) continue;
    seen.add(v);
    out.push({ value: v, label: ruleShortName(a.rule), source: shortSource(a.source ?? '') });
  }
  return out.sort((x, y) => y.value - x.value);
}

/** The citation part of a source text ("Authors Year (Journal): finding" -> "Authors Year"), for chart labels. */
export function shortSource(source: string): string {
  const cut = source.search(/\s*[(:]/);
  return (cut > 0 ? source.slice(0, cut) : source).trim();
}

/** Budget thresholds (|H|, Mx²) of the alerts; the published defaults when none carries one. */
export function budgetThresholds(alerts: readonly WireAlert[]): ThresholdLine[] {
  const lines = linesFrom(alerts, isBudgetUnit);
  return lines.length > 0 ? lines : DEFAULT_BUDGET_THRESHOLDS.slice();
}

/** Rate thresholds (|dH/dt|, Mx²/s) of the alerts; none by default. */
export function rateThresholds(alerts: readonly WireAlert[]): ThresholdLine[] {
  return linesFrom(alerts, isRateUnit);
}

/**
 * Every moment an alert went to raised, from its history; an alert that is raised with no such
 * history entry counts at its `since`. Sorted by time, one per (alert, time).
 */
export function raisedMoments(alerts: readonly WireAlert[]): AlertMoment[] {
  const out: AlertMoment[] = [];
  const seen = new Set<string>();
  const add = (t: number, a: WireAlert): void => {
    const key = `${a.id}|${t}`;
    if (!Number.isFinite(t) || seen.has(key)) return;
    seen.add(key);
    out.push({ t, alertId: a.id, rule: a.rule, label: ruleShortName(a.rule) });
  };
  for (const a of alerts) {
    let found = false;
    for (const h of a.history ?? []) {
      if (h.to === 'raised') {
        add(isoToMs(h.time), a);
        found = true;
      }
    }
    if (!found && a.state === 'raised') add(isoToMs(a.since), a);
  }
  return out.sort((x, y) => x.t - y.t);
}

/** Alerts merged by id: a later message about the same alert replaces the earlier one. */
export function mergeAlerts(held: readonly WireAlert[], incoming: readonly WireAlert[]): WireAlert[] {
  const byId = new Map<string, WireAlert>();
  for (const a of held) byId.set(String(a.id), a);
  for (const a of incoming) byId.set(String(a.id), a);
  return [...byId.values()].sort((a, b) => isoToMs(b.since) - isoToMs(a.since));
}
