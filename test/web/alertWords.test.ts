// The Alert log's words: each rule's evidence in units, quiet rules in current values from the
// newest sample (never the stale evidence of when the rule was made), the sign-reversal floor, the
// clock of each time, and no internal names (wire field names, rule ids).
import { describe, expect, it } from 'vitest';
import { currentWords, evidenceWords, historyWords, ruleClock, ruleTitle, sinceWords } from '../../web/alertWords.js';
import type { GapSpan, SeriesPoint } from '../../web/seriesMerge.js';
import type { WireAlert, WireSample } from '../../web/wire.js';

const INTERNAL = /\b[a-z]+_[a-z_]+\b|\b(?:peak-rate|sign-reversal|build-up-plateau|data-gap|budget-emerging)\b/;
const T0 = Date.UTC(2026, 2, 14, 0, 0, 0);

function point(k: number, rate: number, budget: number, sigmaBudget = 1e39): SeriesPoint {
  const t = T0 + k * 720_000;
  return { t, s: { time: new Date(t).toISOString(), rate_total: rate, budget_total: budget, sigma_rate_total: 1e34, sigma_budget_total: sigmaBudget } as WireSample };
}

function alert(rule: string, state: WireAlert['state'], threshold: number, unit: string, evidence: WireAlert['evidence']): WireAlert {
  return { id: rule, rule, state, since: '2026-03-14T09:00:00Z', threshold, unit, source: 'a source with 6e36 Mx^2/s', evidence, acknowledged: false, history: [] };
}

describe('alert words', () => {
  it('give the evidence of a raise in words and units, in data time', () => {
    const a = alert('peak-rate', 'raised', 6e36, 'Mx^2/s', { value: 6.94e36, sigma: 1.3e34, sigma_factor: 2, window_from: '2026-03-14T14:12:00Z', window_to: '2026-03-14T14:24:00Z', threshold: 6e36 });
    expect(evidenceWords(a)).toBe('|rate| 6.9e36 Mx²/s ± 1.3e34 Mx²/s past 6.0e36 Mx²/s (counted only when past by 2σ) · 2026-03-14 14:12 – 14:24 UTC (data time)');
    expect(ruleTitle('peak-rate')).toBe('Sustained injection rate above the X-flare level');
    expect(sinceWords(a, Date.UTC(2026, 11, 2, 9, 51, 29))).toBe('raised since 2026-03-14 09:00 UTC (data time) · arrived 2026-12-02 09:51:29 UTC (wall clock)');
  });

  it('show a quiet rule at its current value from the newest sample', () => {
    const stale = alert('budget', 'quiet', 2e42, 'Mx^2', { value: 0, sigma: 0, window_from: '2026-03-14T00:36:00Z', window_to: '2026-03-14T00:36:00Z' });
    const series = [point(0, -1e36, -1e40), point(1, -2e36, -5e40, 8.3e38)];
    expect(currentWords(stale, { series, gaps: [] })).toBe('now |budget| 5.0e40 Mx² ± 8.3e38 Mx²: 2.5 % of 2.0e42 Mx²');
    const rate = alert('peak-rate', 'quiet', 6e36, 'Mx^2/s', { value: 0 });
    expect(currentWords(rate, { series, gaps: [] })).toBe('now |rate| 2.0e36 Mx²/s ± 1.0e34 Mx²/s: 33 % of 6.0e36 Mx²/s');
  });

  it('say calmly that a budget under the sign-reversal floor does not count', () => {
    const sign = alert('sign-reversal', 'quiet', 0, 'Mx^2/s', { value: 0, budget_floor: 9e39 });
    // A budget four orders under any threshold, the rate against its sign.
    expect(currentWords(sign, { series: [point(0, -3e34, 5e37)], gaps: [] })).toBe(
      'now budget 5.0e37 Mx²: under the floor of 9.0e39 Mx² (1 % of the lowest published level), too small for its sign to count',
    );
    // Past the floor: whether the rate runs with the budget's sign or against it.
    expect(currentWords(sign, { series: [point(0, -3e36, -7.1e40)], gaps: [] })).toBe("now rate −3.0e36 Mx²/s with the budget's sign (−7.1e40 Mx²)");
    expect(currentWords(sign, { series: [point(0, 3e36, -7.1e40)], gaps: [] })).toBe("now rate 3.0e36 Mx²/s against the budget's sign (−7.1e40 Mx²)");
    // Without the floor in the evidence, the catalogue's default (9e39 Mx²).
    expect(currentWords({ ...sign, evidence: {} }, { series: [point(0, -3e34, 5e37)], gaps: [] })).toMatch(/under the floor of 9\.0e39 Mx²/);
  });

  it('follow the build-up of the budget for the plateau rule', () => {
    // 8 h of steady build-up (12 min steps) to -4e42 Mx^2, then 4 h flat.
    const series: SeriesPoint[] = [];
    for (let k = 0; k <= 40; k++) series.push(point(k, -1e38, -1e41 * k));
    for (let k = 41; k <= 60; k++) series.push(point(k, 0, -4e42));
    const a = alert('build-up-plateau', 'quiet', 3e42, 'Mx^2', { value: 0, plateau_s: 2160, phase_s: 114000 });
    // The rule's tracker moves its peak only by more than 10 % of what was gained (so noise on a flat
    // budget does not restart the plateau clock): the last peak it took is -3.8e42 Mx^2 at 7.6 h,
    // the later 2e41 being within the band; the stale evidence (plateau 36 min, phase 32 h) is not shown.
    expect(currentWords(a, { series, gaps: [] })).toBe('now built up 3.8e42 Mx² over 7.6 h, flat for 4.4 h (the rule needs 3.0e42 Mx², a build-up of 6.0 h and a plateau of 3.0 h)');
  });

  it('name gaps, refusals and the clock of each rule without internal names', () => {
    const gaps: GapSpan[] = [{ from: Date.UTC(2026, 2, 14, 9, 0), to: Date.UTC(2026, 2, 14, 9, 36), bridged: false }];
    const gap = alert('data-gap', 'raised', 0, 's', { value: 2160, window_from: '2026-03-14T09:00:00Z', window_to: '2026-03-14T09:36:00Z', bridged: false, threshold: 0 });
    expect(evidenceWords(gap)).toBe('gap of 36 min (2026-03-14 09:00 – 09:36 UTC, data time), not bridged: the budget holds over it');
    expect(currentWords(gap, { series: [], gaps, gapFactor: 3, cadenceS: 720 })).toBe('1 gap, the last 2026-03-14 09:00 – 09:36 UTC (data time) (a gap: a step over 3 × the 12 min cadence)');
    const refusals = alert('refusals', 'raised', 3, 'frames', { value: 3, window_from: '2026-12-02T08:51:29Z', window_to: '2026-12-02T09:51:29Z', threshold: 3 });
    expect(ruleClock('refusals')).toBe('wall');
    expect(evidenceWords(refusals)).toBe('3 frames refused in the hour to 2026-12-02 09:51:29 UTC (wall clock) (the rule counts 3 or more)');
    expect(sinceWords(refusals)).toBe('raised since 2026-03-14 09:00:00 UTC (wall clock)');
    const plateau = alert('build-up-plateau', 'raised', 3e42, 'Mx^2', { value: 3.5e42, window_from: '2026-03-14T02:00:00Z', window_to: '2026-03-14T09:12:00Z', plateau_s: 11160, phase_s: 25920, sign: -1, within_published_range: true, threshold: 3e42 });
    expect(evidenceWords(plateau)).toBe('built up 3.5e42 Mx² (negative) over 7.2 h (2026-03-14 02:00 – 09:12 UTC, data time), flat for 3.1 h since; within the published range 3.0e42–4.5e43 Mx²');
    for (const text of [evidenceWords(gap), evidenceWords(refusals), evidenceWords(plateau), sinceWords(plateau)]) expect(text).not.toMatch(INTERNAL);
    expect(historyWords(gap, { time: '2026-03-14T09:36:00Z', from: 'quiet', to: 'raised' })).toBe('2026-03-14 09:36 UTC (data time): quiet → raised');
    // A rule that never changed names no moment (the monitor dates it by when the region was made, a wall-clock time).
    expect(sinceWords({ ...refusals, state: 'quiet', since: '2026-12-02T09:00:00Z' })).toBe('quiet, never raised so far');
    expect(sinceWords({ ...gap, state: 'quiet', since: '2026-12-02T09:00:00Z' })).toBe('quiet, never raised so far');
    expect(currentWords(refusals, { series: [], gaps: [], refusals: 0 })).toBe('0 frames refused since the region began (counted on the wall clock, as frames arrive)');
  });
});
