// The braid's and the sphere's words on the page (no DOM): which entropies are lower bounds, the
// flagged triples, the fetch throttle, and a region on the sphere recognised by its columns (the
// chart lines are checked in the browser test).

import { describe, expect, it } from 'vitest';
import { braidExactness, braidNote, flaggedTriples } from '../../web/braidWords.js';
import type { SeriesPoint } from '../../web/seriesMerge.js';
import { throttleDelay } from '../../web/throttle.js';
import { carriesSphere, sphereWords } from '../../web/sphereWords.js';
import type { BraidAnswer, BraidSpanAnswer, WireSample } from '../../web/wire.js';

const t0 = Date.UTC(2026, 2, 14, 6);
const iso = (h: number) => new Date(t0 + h * 3_600_000).toISOString();
const span = (exact: boolean): BraidSpanAnswer & { word: [] } => ({
  start: iso(0), end: iso(2), hours: 2, frames: 11, axisDeg: 0, entropy: 0.4, ratePerHour: 0.2, method: exact ? 'burau-sl2z' : 'burau-unit-circle-bound', exact,
  generators: 6, crossingHelicity: 0, collisions: 0, word: [],
  triples: [
    { ids: [4, 7, 9], entropy: 1.92, trivial: false, pure: true, flagged: true, pairCrossings: [0, 0, 0], windingTurns: [0.01, 0, -0.01], milnor: -1 },
    { ids: [4, 7, 11], entropy: 0.96, trivial: false, pure: false, flagged: false, pairCrossings: [2, 0, 0], windingTurns: [1, 0, 0], milnor: null },
  ],
});
const answer = (exact: boolean, strands: number[]): BraidAnswer => ({
  region: 'r',
  series: [0, 1, 2].map((h) => ({ frame_id: h, time: iso(h), braid_entropy_rate: h === 0 ? null : 0.2, braid_entropy_rate_run: 0.18, braid_strands: strands.length, braid_flagged_triples: 1 })),
  last: { time: iso(2), strands, segmentStarted: null, segment: span(exact), window: span(exact), run: { segments: 1, entropy: 0.36, hours: 2, ratePerHour: 0.18, exact } },
  segments: [{ time: iso(0), reason: 'first frame', strands }],
});

describe('the braid in words and lines', () => {
  it('says exact for 3 strands and lower bounds for more', () => {
    expect(braidNote(answer(true, [4, 7, 9]))).toBe('window 2 h: 0.2 h⁻¹ · whole run 2 h, 1 segment: 0.18 h⁻¹ · exact (3 strands: 4, 7, 9) · segment since 06:00 UTC: first frame · to 08:00 UTC');
    expect(braidNote(answer(false, [4, 7, 9, 11]))).toMatch(/ · lower bounds \(4 strands: 4, 7, 9, 11; the Burau matrix on the unit circle\) · /);
    expect(braidExactness(answer(false, [4, 7, 9, 11]))).toEqual({ window: false, run: false });
    expect(braidNote(undefined)).toBe('');
  });

  it('lists only the flagged triples', () => {
    expect(flaggedTriples(answer(true, [4, 7, 9])).map((t) => t.ids)).toEqual([[4, 7, 9]]);
    expect(flaggedTriples({ ...answer(true, [4, 7, 9]), last: null })).toEqual([]);
  });

  it('throttles: now when the last fetch is old enough, else when it will be', () => {
    expect(throttleDelay(undefined, 5000, 3000)).toBe(0);
    expect(throttleDelay(1000, 5000, 3000)).toBe(0);
    expect(throttleDelay(4000, 5000, 3000)).toBe(2000);
  });
});

describe('a region on the sphere', () => {
  const row = (extra: Partial<WireSample>): SeriesPoint => ({ t: t0, s: { rate_total: 2e36, ...extra } as WireSample });
  it('is recognised by its columns; flat rows (absent or null) are not', () => {
    expect(carriesSphere([row({})])).toBe(false);
    expect(carriesSphere([row({ rate_rotation: null, budget_north: null })])).toBe(false);
    expect(carriesSphere([row({}), row({ rate_rotation: -5e35 })])).toBe(true);
  });

  it('says the rotation share and the hemisphere budgets of the newest row', () => {
    const words = sphereWords(row({ rate_rotation: -5e35, rate_own_motions: 2.5e36, budget_north: 3e40, budget_south: -1e40, budget_rotation: -2e39, planar_departure: 0.012 }).s);
    expect(words).toBe('newest: rotation −5.0e35 Mx²/s of 2.0e36 Mx²/s (−25 %), own motions 2.5e36 Mx²/s · budget north 3.0e40 Mx², south −1.0e40 Mx² · by rotation −2.0e39 Mx² · a flat-patch answer would differ by 1.2 %');
  });
});
