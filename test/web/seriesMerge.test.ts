import { describe, expect, it } from 'vitest';
import { backfillSince, mergeGaps, mergeSamples, medianStepMs, nearestIndex } from '../../web/seriesMerge.js';
import type { WireSample } from '../../web/wire.js';

function sample(iso: string, rate: number): WireSample {
  return {
    time: iso, dt_s: 720, rate_total: rate, rate_spin: rate / 2, rate_orbit: rate / 2, rate_background: 0,
    budget_total: rate * 720, budget_spin: 0, budget_orbit: 0, budget_background: 0, rate_total_ga: rate,
    rate_emergence: null, rate_shear: null, sigma_rate_total: 1, sigma_budget_total: 1, velocity_method: 'given',
    split_method: 'labels', noise_g: 5, masked_fraction: 0, flags: [], frame_id: Date.parse(iso) / 1000,
    sigma_rate_spin: 0, sigma_rate_orbit: 0, flux_unsigned: null, budget_normalised: null, centre_lon_deg: null, centre_lat_deg: null, centre_disk_angle_deg: null,
  };
}
const at = (min: number): string => new Date(Date.UTC(2026, 2, 14, 6, min)).toISOString();

describe('mergeSamples', () => {
  it('appends live samples in order and keeps one per time', () => {
    let s = mergeSamples([], [sample(at(0), 1), sample(at(12), 2)]);
    s = mergeSamples(s, [sample(at(24), 3)]);
    s = mergeSamples(s, [sample(at(24), 3)]); // resent
    expect(s.map((p) => p.s.rate_total)).toEqual([1, 2, 3]);
    expect(s.map((p) => p.t)).toEqual([at(0), at(12), at(24)].map(Date.parse));
  });

  it('merges a backfill overlapping the held series, by time, de-duplicated, newest answer winning', () => {
    const held = mergeSamples([], [sample(at(0), 1), sample(at(12), 2), sample(at(48), 5)]);
    // Backfill after a reconnect: repeats 12, fills 24 and 36, repeats 48 with a revised value.
    const merged = mergeSamples(held, [sample(at(48), 50), sample(at(24), 3), sample(at(12), 2), sample(at(36), 4)]);
    expect(merged.map((p) => p.s.rate_total)).toEqual([1, 2, 3, 4, 50]);
    for (let i = 1; i < merged.length; i++) expect(merged[i].t).toBeGreaterThan(merged[i - 1].t);
    // The held array is not modified.
    expect(held.map((p) => p.s.rate_total)).toEqual([1, 2, 5]);
  });

  it('keeps the last of duplicates inside one incoming batch and drops unparseable times', () => {
    const merged = mergeSamples([], [sample(at(5), 1), sample('not a time', 9), sample(at(5), 7)]);
    expect(merged.map((p) => p.s.rate_total)).toEqual([7]);
  });

  it('gives the since of a backfill as the newest held time', () => {
    expect(backfillSince([])).toBeUndefined();
    const s = mergeSamples([], [sample(at(12), 2), sample(at(0), 1)]);
    expect(backfillSince(s)).toBe(at(12));
  });

  it('agrees with a sort-and-dedupe reference on random batches', () => {
    let state = 12345;
    const rnd = (): number => ((state = (state * 1103515245 + 12345) % 2147483648) / 2147483648);
    let held = mergeSamples([], []);
    const truth = new Map<number, number>();
    for (let round = 0; round < 40; round++) {
      const batch: WireSample[] = [];
      const k = 1 + Math.floor(rnd() * 8);
      for (let i = 0; i < k; i++) {
        const m = Math.floor(rnd() * 60);
        const v = Math.floor(rnd() * 1000);
        batch.push(sample(at(m), v));
      }
      held = mergeSamples(held, batch);
      for (const b of batch) truth.set(Date.parse(b.time), b.rate_total as number);
    }
    const expected = [...truth.entries()].sort((a, b) => a[0] - b[0]);
    expect(held.map((p) => [p.t, p.s.rate_total])).toEqual(expected);
  });
});

describe('gaps and lookups', () => {
  it('merges gap lists without repeats', () => {
    const a = mergeGaps([], [{ from: at(10), to: at(40), bridged: true }]);
    const b = mergeGaps(a, [{ from: at(10), to: at(40), bridged: true }, { from: at(0), to: at(5), bridged: false }, { from: 'x', to: at(1), bridged: false }]);
    expect(b.map((g) => [g.from, g.to, g.bridged])).toEqual([
      [Date.parse(at(0)), Date.parse(at(5)), false],
      [Date.parse(at(10)), Date.parse(at(40)), true],
    ]);
  });

  it('finds the nearest sample to a picked time', () => {
    const s = mergeSamples([], [sample(at(0), 0), sample(at(12), 1), sample(at(24), 2)]);
    expect(nearestIndex(s, Date.parse(at(5)))).toBe(0);
    expect(nearestIndex(s, Date.parse(at(7)))).toBe(1);
    expect(nearestIndex(s, Date.parse(at(6)))).toBe(0); // tie goes to the earlier one
    expect(nearestIndex(s, Date.parse(at(99)))).toBe(2);
    expect(nearestIndex(s, Date.parse(at(-99)))).toBe(0);
    expect(nearestIndex([], 0)).toBe(-1);
  });

  it('gives the median step', () => {
    const s = mergeSamples([], [sample(at(0), 0), sample(at(12), 1), sample(at(24), 2), sample(at(90), 3)]);
    expect(medianStepMs(s)).toBe(12 * 60_000);
  });
});

import { applySnapshot } from '../../web/seriesMerge.js';

describe('applySnapshot', () => {
  it('replaces held samples from the snapshot start on (a rewind moved pair mid-times) and keeps older ones', () => {
    const held = mergeSamples([], [sample(at(0), 1), sample(at(12), 2), sample(at(24), 3), sample(at(36), 4)]);
    // After a late frame at 18 min the monitor's newest samples sit at 15 and 21 instead of 24.
    const snap = [sample(at(15), 20), sample(at(21), 30), sample(at(36), 40)];
    const next = applySnapshot(held, snap);
    expect(next.map((p) => [new Date(p.t).toISOString(), p.s.rate_total])).toEqual([
      [at(0), 1], [at(12), 2], [at(15), 20], [at(21), 30], [at(36), 40],
    ]);
    expect(applySnapshot(held, [])).toEqual([]);
  });
});
