import { describe, expect, it } from 'vitest';
import { bandWithBreaks, breaksBefore, decimateMinMax, lineWithBreaks, type XY } from '../../web/decimate.js';

describe('lineWithBreaks', () => {
  it('puts a null inside a gap and across an oversize step, and turns NaN/null values into breaks', () => {
    const t = [0, 10, 20, 60, 70, 200];
    const v = [1, 2, Number.NaN, 4, null, 6];
    const pts = lineWithBreaks(t, v, [{ from: 25, to: 55 }], 50);
    expect(pts).toEqual([
      { x: 0, y: 1 }, { x: 10, y: 2 }, { x: 20, y: null },
      { x: 40, y: null }, // the reported gap
      { x: 60, y: 4 }, { x: 70, y: null },
      { x: 135, y: null }, // 130 > maxStep 50
      { x: 200, y: 6 },
    ]);
  });

  it('ignores gaps that do not fall between two samples', () => {
    expect(breaksBefore([0, 10, 20], [{ from: 30, to: 40 }, { from: -20, to: -10 }])).toEqual([false, false, false]);
    expect(breaksBefore([0, 10, 20], [{ from: 12, to: 18 }])).toEqual([false, false, true]);
  });
});

describe('decimateMinMax', () => {
  function series(n: number, f: (i: number) => number | null): XY[] {
    return Array.from({ length: n }, (_, i) => ({ x: i, y: f(i) }));
  }

  it('leaves short series alone', () => {
    const s = series(30, (i) => i);
    expect(decimateMinMax(s, 10)).toEqual(s);
  });

  it('reduces 20,000 samples to at most 4 per bucket and keeps every bucket extreme', () => {
    let state = 7;
    const rnd = (): number => ((state = (state * 16807) % 2147483647) / 2147483647);
    const s = series(20_000, (i) => Math.sin(i / 300) + (i === 12_345 ? 40 : 0) + rnd() * 0.1);
    const buckets = 800;
    const d = decimateMinMax(s, buckets);
    expect(d.length).toBeLessThanOrEqual(4 * buckets);
    expect(d.length).toBeGreaterThan(buckets);
    // The spike survives.
    expect(d.some((p) => p.x === 12_345 && (p.y as number) > 39)).toBe(true);
    // Per bucket, the decimated min and max equal the full series' min and max.
    const x0 = 0;
    const x1 = 19_999;
    const bucketOf = (x: number): number => Math.min(buckets - 1, Math.floor(((x - x0) / (x1 - x0)) * buckets));
    const full = new Map<number, [number, number]>();
    for (const p of s) {
      const b = bucketOf(p.x);
      const m = full.get(b) ?? [Infinity, -Infinity];
      full.set(b, [Math.min(m[0], p.y as number), Math.max(m[1], p.y as number)]);
    }
    const got = new Map<number, [number, number]>();
    for (const p of d) {
      const b = bucketOf(p.x);
      const m = got.get(b) ?? [Infinity, -Infinity];
      got.set(b, [Math.min(m[0], p.y as number), Math.max(m[1], p.y as number)]);
    }
    expect(got).toEqual(full);
    // First and last samples are kept, and x stays increasing.
    expect(d[0]).toEqual(s[0]);
    expect(d[d.length - 1]).toEqual(s[s.length - 1]);
    for (let i = 1; i < d.length; i++) expect(d[i].x).toBeGreaterThan(d[i - 1].x);
  });

  it('keeps breaks (one null per run) so gaps stay gaps after decimation', () => {
    const s = series(10_000, (i) => (i >= 4000 && i < 4003 ? null : i % 7));
    const d = decimateMinMax(s, 100);
    const nulls = d.filter((p) => p.y === null);
    expect(nulls).toEqual([{ x: 4000, y: null }]);
    const before = d.filter((p) => p.y !== null && p.x < 4000).length;
    const after = d.filter((p) => p.y !== null && p.x >= 4003).length;
    expect(before).toBeGreaterThan(0);
    expect(after).toBeGreaterThan(0);
  });
});

describe('bandWithBreaks', () => {
  it('gives aligned lower and upper edges, breaking at gaps and missing sigma', () => {
    const b = bandWithBreaks([0, 10, 20, 30], [1, 2, 3, 4], [0.5, null, -1, 1], [{ from: 22, to: 28 }], Infinity, 1000);
    expect(b).toEqual([
      { x: 0, lo: 0.5, hi: 1.5 },
      { x: 10, lo: null, hi: null },
      { x: 20, lo: 2, hi: 4 },
      { x: 25, lo: null, hi: null },
      { x: 30, lo: 3, hi: 5 },
    ]);
  });

  it('keeps the envelope per bucket when decimating', () => {
    const n = 5000;
    const t = Array.from({ length: n }, (_, i) => i);
    const c = t.map((i) => (i === 2500 ? 10 : 0));
    const s = t.map(() => 1);
    const b = bandWithBreaks(t, c, s, [], Infinity, 50);
    expect(b.length).toBeLessThanOrEqual(100);
    expect(Math.max(...b.map((p) => p.hi as number))).toBe(11);
    expect(Math.min(...b.map((p) => p.lo as number))).toBe(-1);
    for (let i = 1; i < b.length; i++) expect(b[i].x).toBeGreaterThan(b[i - 1].x);
  });
});
