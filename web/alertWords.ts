// The Alert log in words and units: what each rule watches, where the region stands against it
// now, and the evidence of its last change, without the wire's field names. Times are data time
// (the samples' own times), except the refusals rule, which counts frames as they arrive and so
// runs on the wall clock; each time says which clock it is on. Quiet rules show the current value
// from the newest sample, not the evidence of the moment the rule was made.

import { trackBuildUp, viewBuildUp, type BuildUpState } from '../core/alerts/buildUpTracker.js';
import { RULES, ruleDefinition } from '../core/alerts/ruleCatalogue.js';
import { isoToMs, type GapSpan, type SeriesPoint } from './seriesMerge.js';
import { formatDuration, formatHelicity, formatRate, formatSci, formatUtc, prettyUnit } from './unitFormat.js';
import type { AlertChange, AlertState, WireAlert } from './wire.js';

export const STATE_MARK: Record<AlertState, string> = { quiet: '○', rising: '◔', raised: '●', settled: '◌' };

/** Short names for the chart markers (the log gives the full title). */
const SHORT_NAMES: Record<string, string> = {
  budget: 'budget past eruptive level',
  'budget-emerging': 'budget past emerging level',
  'peak-rate': 'rate past X-flare level',
  'build-up-plateau': 'build-up then plateau',
  'sign-reversal': 'sign reversal',
  'data-gap': 'data gap',
  refusals: 'frames refused',
};

/** The rule's name in words: the catalogue's title, else the id with its dashes as spaces. */
export function ruleTitle(rule: string): string {
  return ruleDefinition(rule)?.title ?? rule.replace(/[-_]+/g, ' ');
}

export function ruleShortName(rule: string): string {
  return SHORT_NAMES[rule] ?? rule.replace(/[-_]+/g, ' ');
}

/** Which clock a rule's times are on. */
export function ruleClock(rule: string): 'data' | 'wall' {
  return rule === 'refusals' ? 'wall' : 'data';
}

function time(iso: string | undefined | null, clock: 'data' | 'wall'): string {
  const ms = typeof iso === 'string' ? isoToMs(iso) : Number.NaN;
  return `${formatUtc(ms, clock === 'wall')} (${clock === 'wall' ? 'wall clock' : 'data time'})`;
}

function span(fromIso: unknown, toIso: unknown): string {
  const a = typeof fromIso === 'string' ? isoToMs(fromIso) : Number.NaN;
  const b = typeof toIso === 'string' ? isoToMs(toIso) : Number.NaN;
  if (!Number.isFinite(a) || !Number.isFinite(b)) return '';
  if (a === b) return formatUtc(a, false);
  const sameDay = new Date(a).toISOString().slice(0, 10) === new Date(b).toISOString().slice(0, 10);
  return `${formatUtc(a, false).replace(' UTC', '')} – ${sameDay ? formatUtc(b, false).slice(11) : formatUtc(b, false)}`;
}

const num = (v: unknown): number | undefined => (typeof v === 'number' && Number.isFinite(v) ? v : undefined);

function sigmaText(sigma: number | undefined, unit: string): string {
  return sigma !== undefined && sigma > 0 ? ` ± ${formatSci(sigma, 2)}${unit ? ' ' + unit : ''}` : '';
}

function percent(value: number, of: number): string {
  if (!(of > 0)) return '';
  const p = (100 * value) / of;
  return p >= 10 ? `${Math.round(p)} %` : p >= 0.1 ? `${p.toPrecision(2)} %` : p > 0 ? 'under 0.1 %' : '0 %';
}

/** What the page knows beside the alerts, for the current values of quiet rules. */
export interface AlertContext {
  series: readonly SeriesPoint[];
  gaps: readonly GapSpan[];
  refusals?: number;
  cadenceS?: number | null;
  gapFactor?: number;
}

/** The build-up tracker of the plateau rule run over the page's series (core/alerts/buildUpTracker.ts). */
function buildUpNow(series: readonly SeriesPoint[]): { view: ReturnType<typeof viewBuildUp>; band: number } | undefined {
  const def = RULES.find((r) => r.id === 'build-up-plateau');
  const band = Number(def?.defaults.plateauBand ?? 0.1);
  let state: BuildUpState | undefined;
  for (const p of series) {
    const b = p.s.budget_total;
    if (typeof b === 'number' && Number.isFinite(b)) state = trackBuildUp(state, p.t, b, band);
  }
  return state && series.length > 0 ? { view: viewBuildUp(state, series[series.length - 1].t), band } : undefined;
}

/** The evidence of the rule's last change, in words. */
export function evidenceWords(a: WireAlert): string {
  const ev: Readonly<Record<string, unknown>> = a.evidence ?? {};
  const unit = prettyUnit(a.unit ?? '');
  const value = num(ev.value);
  const threshold = num(a.threshold) ?? num(ev.threshold);
  const sigma = num(ev.sigma);
  const k = num(ev.sigma_factor);
  const when = span(ev.window_from, ev.window_to);
  switch (a.rule) {
    case 'budget':
    case 'budget-emerging':
    case 'peak-rate': {
      if (value === undefined || threshold === undefined) return '';
      const what = a.rule === 'peak-rate' ? '|rate|' : '|budget|';
      const fmt = a.rule === 'peak-rate' ? formatRate : formatHelicity;
      const past = value > threshold;
      return `${what} ${fmt(value)}${sigmaText(sigma, unit)} ${past ? 'past' : 'under'} ${fmt(threshold)}` +
        `${k ? ` (counted only when past by ${formatSci(k)}σ)` : ''}${when ? ` · ${when} (data time)` : ''}`;
    }
    case 'build-up-plateau': {
      if (value === undefined) return '';
      const phase = num(ev.phase_s);
      const plateau = num(ev.plateau_s);
      const sign = num(ev.sign);
      const def = ruleDefinition(a.rule);
      const upper = num(def?.defaults.upper);
      const inRange = ev.within_published_range === true;
      return `built up ${formatHelicity(value)}${sign ? (sign < 0 ? ' (negative)' : ' (positive)') : ''}` +
        `${phase !== undefined ? ` over ${formatDuration(phase)}` : ''}${when ? ` (${when}, data time)` : ''}` +
        `${plateau !== undefined ? `, flat for ${formatDuration(plateau)} since` : ''}` +
        `${threshold !== undefined && upper !== undefined ? `; ${inRange ? 'within' : 'outside'} the published range ${formatSci(threshold)}–${formatSci(upper)} Mx²` : ''}`;
    }
    case 'sign-reversal': {
      const rate = num(ev.rate);
      const budget = num(ev.budget);
      const floor = num(ev.budget_floor);
      if (rate === undefined || budget === undefined) return '';
      if (floor !== undefined && Math.abs(budget) < floor) {
        return `budget ${formatHelicity(budget)} under the ${formatHelicity(floor)} floor: its sign does not count yet`;
      }
      const against = budget !== 0 && Math.sign(rate) === -Math.sign(budget);
      return `rate ${formatRate(rate)}${sigmaText(sigma, 'Mx²/s')} ${against ? 'against' : 'with'} the budget's sign (${formatHelicity(budget)})` +
        `${when ? ` · ${when} (data time)` : ''}`;
    }
    case 'data-gap': {
      if (!value) return 'no gap';
      return `gap of ${formatDuration(value)} (${when}, data time), ${ev.bridged === true ? 'bridged: the budget integrates across it' : 'not bridged: the budget holds over it'}`;
    }
    case 'refusals': {
      if (value === undefined) return '';
      return `${formatSci(value)} frame${value === 1 ? '' : 's'} refused in the hour to ${time(typeof ev.window_to === 'string' ? ev.window_to : undefined, 'wall')}` +
        `${threshold !== undefined ? ` (the rule counts ${formatSci(threshold)} or more)` : ''}`;
    }
    default:
      return value !== undefined ? `value ${formatSci(value, 3)}${unit ? ' ' + unit : ''}${threshold !== undefined ? `, threshold ${formatSci(threshold)}${unit ? ' ' + unit : ''}` : ''}` : '';
  }
}

/** Where the region stands against the rule now (from the newest sample), in words. */
export function currentWords(a: WireAlert, ctx: AlertContext): string {
  const latest = ctx.series[ctx.series.length - 1]?.s;
  const threshold = num(a.threshold);
  switch (a.rule) {
    case 'budget':
    case 'budget-emerging': {
      const b = num(latest?.budget_total);
      if (b === undefined || threshold === undefined) return '';
      return `now |budget| ${formatHelicity(Math.abs(b))}${sigmaText(num(latest?.sigma_budget_total), 'Mx²')}: ${percent(Math.abs(b), threshold)} of ${formatHelicity(threshold)}`;
    }
    case 'peak-rate': {
      const r = num(latest?.rate_total);
      if (r === undefined || threshold === undefined) return '';
      return `now |rate| ${formatRate(Math.abs(r))}${sigmaText(num(latest?.sigma_rate_total), 'Mx²/s')}: ${percent(Math.abs(r), threshold)} of ${formatRate(threshold)}`;
    }
    case 'build-up-plateau': {
      const b = buildUpNow(ctx.series);
      const def = ruleDefinition(a.rule);
      const plateauS = num(def?.defaults.plateauS);
      const minPhaseS = num(def?.defaults.minPhaseS);
      if (!b || threshold === undefined) return '';
      const v = b.view;
      const phaseS = (v.phaseTo - v.phaseFrom) / 1000;
      return `now built up ${formatHelicity(v.accumulated)} over ${formatDuration(phaseS)}, flat for ${formatDuration(v.plateauS)}` +
        ` (the rule needs ${formatHelicity(threshold)}${minPhaseS ? `, a build-up of ${formatDuration(minPhaseS)}` : ''}${plateauS ? ` and a plateau of ${formatDuration(plateauS)}` : ''})`;
    }
    case 'sign-reversal': {
      const r = num(latest?.rate_total);
      const b = num(latest?.budget_total);
      if (r === undefined || b === undefined) return '';
      const floor = num(a.evidence?.budget_floor) ?? num(ruleDefinition(a.rule)?.defaults.budgetFloor);
      if (floor !== undefined && Math.abs(b) < floor) {
        return `now budget ${formatHelicity(b)}: under the floor of ${formatHelicity(floor)} (1 % of the lowest published level), too small for its sign to count`;
      }
      const against = b !== 0 && Math.sign(r) === -Math.sign(b);
      return `now rate ${formatRate(r)} ${against ? 'against' : 'with'} the budget's sign (${formatHelicity(b)})`;
    }
    case 'data-gap': {
      const last = ctx.gaps[ctx.gaps.length - 1];
      const rule = ctx.gapFactor && ctx.cadenceS ? ` (a gap: a step over ${formatSci(ctx.gapFactor)} × the ${formatDuration(ctx.cadenceS)} cadence)` : '';
      if (!last) return `no gap so far${rule}`;
      return `${ctx.gaps.length} gap${ctx.gaps.length === 1 ? '' : 's'}, the last ${span(new Date(last.from).toISOString(), new Date(last.to).toISOString())} (data time)${rule}`;
    }
    case 'refusals':
      return ctx.refusals !== undefined
        ? `${formatSci(ctx.refusals)} frame${ctx.refusals === 1 ? '' : 's'} refused since the region began (counted on the wall clock, as frames arrive)`
        : '';
    default:
      return '';
  }
}

/** One line of an alert's history, with its clock. */
export function historyWords(a: WireAlert, h: AlertChange): string {
  const by = h.evidence && typeof h.evidence.acknowledged_by === 'string';
  if (by || (h.from === h.to && a.acknowledged)) return `${time(h.time, 'wall')}: acknowledged`;
  return `${time(h.time, ruleClock(a.rule))}: ${h.from} → ${h.to}`;
}

/** "since …" with the clock, and the arrival (wall clock) when the page saw the change live. */
export function sinceWords(a: WireAlert, arrivedAt?: number): string {
  // A rule that never changed has no moment to name: the monitor dates it by when the rule or the
  // region was made, on whichever clock that was.
  if (a.state === 'quiet' && (a.history ?? []).length === 0) return 'quiet, never raised so far';
  const clock = ruleClock(a.rule);
  const arrival = arrivedAt !== undefined && clock === 'data' && a.state !== 'quiet' ? ` · arrived ${formatUtc(arrivedAt)} (wall clock)` : '';
  return `${a.state} since ${formatUtc(isoToMs(a.since), clock === 'wall')}${clock === 'data' ? ' (data time)' : ' (wall clock)'}${arrival}`;
}

/** The source with printed units (Mx^2 -> Mx²). */
export function sourceWords(source: string | undefined): string {
  return source ? prettyUnit(source) : 'not given';
}
