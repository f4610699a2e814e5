import { describe, expect, it } from 'vitest';
import type { FootpointAnalysis, FootpointState } from '../../core/footpoints/analyseFootpoints.js';
import { analyseFootpoints } from '../../core/footpoints/analyseFootpoints.js';
import type { FootpointEvent } from '../../core/footpoints/tracking.js';
import type { Spot } from './scene.js';
import { sceneFrame } from './scene.js';

// A scripted scene of our own (no outside source: the script is the truth). 50 frames one minute
// apart on a 160 x 100 grid of 0.5 Mm pixels, everything drifting by (0.25, 0.1) Mm per frame:
//   A(+), B(-)        steady the whole time
//   C(+), D(+)        approach and merge (one body from about frame 9), one footpoint afterwards
//   E(-)              two coincident halves that separate from frame 25: a split
//   F(+), G(-)        approach and fade from frame 15, gone by frame 35: a cancellation
//   H(+), I(-)        born together at frame 10 beside each other: an emergence
const grid = { nx: 160, ny: 100, dx: 0.5, dy: 0.5 };
const DT = 60_000;
const T0 = Date.UTC(2026, 5, 1, 12);

function spotsAt(f: number): Spot[] {
  const sx = 0.25 * f, sy = 0.1 * f;
  const at = (x: number, y: number, s: number, peak: number): Spot => ({ x: x + sx, y: y + sy, a: s, b: s, angle: 0, peak });
  const spots: Spot[] = [at(6, 8, 1.5, 1200), at(6, 36, 1.5, -1200)];
  const close = Math.min(f, 20) * 0.2; // C and D each move 4 Mm by frame 20
  spots.push(at(22 + close, 12, 1.3, 900), at(30 - close, 12, 1.3, 800));
  const apart = Math.max(0, f - 25) * 0.15;
  spots.push(at(26 - apart, 36, 1.3, -500), at(26 + apart, 36, 1.3, -500));
  if (f < 35) {
    const fade = f < 15 ? 1 : 1 - (f - 15) / 20, near = Math.max(0, f - 15) * 0.125;
    spots.push(at(40 + near, 24, 1.2, 700 * fade), at(47 - near, 24, 1.2, -700 * fade));
  }
  if (f >= 10) spots.push(at(50, 38, 1.2, 600), at(54, 38, 1.2, -600));
  return spots;
}

/** First frame at which C and D's saddle stands at half their lower peak (noise-free, on their axis). */
function firstFrameOfOneBody(): number {
  for (let f = 0; f < 50; f++) {
    const [c, d] = spotsAt(f).slice(2, 4);
    const profile = (x: number) => [c, d].reduce((s, p) => s + p.peak * Math.exp(-0.5 * ((x - p.x) / p.a) ** 2), 0);
    let saddle = Infinity;
    for (let x = c.x; x <= d.x; x += 0.01) saddle = Math.min(saddle, profile(x));
    if (saddle >= 0.5 * Math.min(profile(c.x), profile(d.x))) return f;
  }
  return -1;
}

const idNear = (a: FootpointAnalysis, x: number, y: number) => {
  let best = -1, d = Infinity;
  for (const r of a.footpoints) {
    const e = Math.hypot(r.x - x, r.y - y);
    if (e < d) { d = e; best = r.id; }
  }
  return d < 2 ? best : -1;
};

describe('tracking a scripted scene', () => {
  const results: FootpointAnalysis[] = [];
  let state: FootpointState | undefined;
  for (let f = 0; f < 50; f++) {
    const r = analyseFootpoints(state, sceneFrame(grid, T0 + f * DT, spotsAt(f), 5, 100 + f));
    results.push(r);
    state = r.state;
  }
  const events: (FootpointEvent & { frame: number })[] = results.flatMap((r, f) => r.events.map((e) => ({ ...e, frame: f })));
  const first = results[0];
  const A = idNear(first, 6, 8), B = idNear(first, 6, 36), C = idNear(first, 22, 12), D = idNear(first, 30, 12);
  const E = idNear(first, 26, 36), F = idNear(first, 40, 24), G = idNear(first, 47, 24);

  it('finds the seven footpoints of the first frame with the right polarities, and no others', () => {
    expect(first.footpoints).toHaveLength(7);
    expect([A, B, C, D, E, F, G].every((id) => id > 0)).toBe(true);
    expect(new Set([A, B, C, D, E, F, G]).size).toBe(7);
    const pol = (id: number) => first.footpoints.find((r) => r.id === id)!.polarity;
    expect([A, B, C, D, E, F, G].map(pol)).toEqual([1, -1, 1, 1, -1, 1, -1]);
    expect(first.events).toEqual([]);
  });

  it('logs exactly the scripted events: two births, one merger, one cancellation of two, one split', () => {
    expect(events.map((e) => e.kind).sort()).toEqual(['appeared', 'appeared', 'merged', 'split', 'vanished', 'vanished']);
    const born = events.filter((e) => e.kind === 'appeared');
    expect(born.every((e) => e.frame === 10 && e.time === T0 + 10 * DT)).toBe(true);
    const H = idNear(results[10], 50 + 2.5, 38 + 1), I = idNear(results[10], 54 + 2.5, 38 + 1);
    expect(born.map((e) => e.kind === 'appeared' && [e.id, e.cause, e.partner])).toEqual(
      expect.arrayContaining([[H, 'emergence', I], [I, 'emergence', H]]));
    for (const e of born) if (e.kind === 'appeared') expect(Math.abs(e.flux)).toBeGreaterThan(1e19);

    const merged = events.find((e) => e.kind === 'merged')!;
    expect(merged.kind === 'merged' && [...merged.from].sort()).toEqual([C, D].sort());
    expect(merged.kind === 'merged' && [C, D]).toContain(merged.id);
    // One body once the saddle between C and D stands at half the lower peak (the segmentation's
    // saddle ratio): worked out from the script's spots on the line through their centres.
    const expected = firstFrameOfOneBody();
    expect(merged.frame).toBeGreaterThanOrEqual(expected - 1);
    expect(merged.frame).toBeLessThanOrEqual(expected + 1);
    // The merged flux is about the sum of the parents'.
    if (merged.kind === 'merged') expect(merged.flux / (merged.fluxes[0] + merged.fluxes[1])).toBeCloseTo(1, 1);

    const gone = events.filter((e) => e.kind === 'vanished');
    expect(gone.map((e) => e.kind === 'vanished' && [e.id, e.cause, e.partner])).toEqual(
      expect.arrayContaining([[F, 'cancellation', G], [G, 'cancellation', F]]));
    for (const e of gone) {
      expect(e.frame).toBeGreaterThanOrEqual(25);
      expect(e.frame).toBeLessThanOrEqual(35);
    }

    const split = events.find((e) => e.kind === 'split')!;
    expect(split.kind === 'split' && split.id).toBe(E);
    expect(split.kind === 'split' && split.into.length).toBe(2);
    expect(split.kind === 'split' && split.into[0]).toBe(E);
    expect(split.frame).toBeGreaterThan(25);
    if (split.kind === 'split') expect((split.fluxes[0] + split.fluxes[1]) / split.flux).toBeCloseTo(1, 1);
  });

  it('keeps every id through 50 frames of drift (12.5 Mm, 25 pixels)', () => {
    const merged = events.find((e) => e.kind === 'merged')!;
    for (let f = 0; f < 50; f++) {
      const sx = 0.25 * f, sy = 0.1 * f;
      const r = results[f];
      expect(idNear(r, 6 + sx, 8 + sy)).toBe(A);
      expect(idNear(r, 6 + sx, 36 + sy)).toBe(B);
      if (f > 25) expect(idNear(r, 26 + sx, 12 + sy)).toBe(merged.id);
      if (f < merged.frame - 1) { expect(idNear(r, 22 + 0.2 * f + sx, 12 + sy)).toBe(C); expect(idNear(r, 30 - 0.2 * f + sx, 12 + sy)).toBe(D); }
      if (f < 25) expect(idNear(r, 26 + sx, 36 + sy)).toBe(E);
      if (f >= 11) expect(idNear(r, 50 + sx, 38 + sy)).toBe(idNear(results[10], 52.5, 39));
      // Tracked footpoints report their drift: 0.25 Mm/min = 4.17 km/s along x.
      const a = r.footpoints.find((p) => p.id === A)!;
      if (f > 0) { expect(a.motionSource).toBe('tracking'); expect(a.vx!).toBeCloseTo(4.17, 0); expect(a.vy!).toBeCloseTo(1.67, 0); }
    }
    // Ids are never reused.
    const born = results.flatMap((r) => r.footpoints.map((p) => p.id));
    expect(Math.max(...born)).toBe(results[49].state.nextId - 1);
  });
});

describe('tracking fast motion', () => {
  it('a footpoint jumping more than its own size each frame keeps its id (distance match, then prediction)', () => {
    const g = { nx: 200, ny: 60, dx: 0.5, dy: 0.5 };
    let state: FootpointState | undefined;
    const ids: number[] = [];
    for (let f = 0; f < 12; f++) {
      // 3 Mm (6 pixels) per frame; the spot is about 5 pixels across at threshold.
      const spots: Spot[] = [{ x: 8 + 3 * f, y: 15, a: 0.8, b: 0.8, angle: 0, peak: 800 }, { x: 8, y: 6, a: 1, b: 1, angle: 0, peak: -700 }];
      const r = analyseFootpoints(state, sceneFrame(g, f * 60_000, spots, 5, 300 + f), { noise: 5 });
      state = r.state;
      ids.push(r.footpoints.find((p) => p.polarity === 1)!.id);
      if (f > 0) expect(r.events).toEqual([]);
      if (f > 1) expect(r.footpoints.find((p) => p.polarity === 1)!.vx).toBeCloseTo(50, 0); // 3 Mm/min = 50 km/s
    }
    expect(new Set(ids).size).toBe(1);
  });
});

describe('footpoints crossing the border of the field of view', () => {
  it('one that drifts in is logged as appeared at the edge, and vanishes at the edge when it drifts out', () => {
    const g = { nx: 80, ny: 40, dx: 0.5, dy: 0.5 };
    let state: FootpointState | undefined;
    const all: FootpointEvent[] = [];
    for (let f = 0; f < 40; f++) {
      // From beyond the left border to beyond the right one, 1.5 Mm per frame; a quiet companion stays inside.
      const spots: Spot[] = [{ x: -4 + 1.5 * f, y: 10, a: 1.2, b: 1.2, angle: 0, peak: 900 }, { x: 20, y: 16, a: 1.2, b: 1.2, angle: 0, peak: 900 }];
      const r = analyseFootpoints(state, sceneFrame(g, f * 60_000, spots, 4, 700 + f), { noise: 4 });
      state = r.state;
      all.push(...r.events);
    }
    expect(all.map((e) => e.kind)).toEqual(['appeared', 'vanished']);
    expect(all[0].kind === 'appeared' && all[0].cause).toBe('edge');
    expect(all[1].kind === 'vanished' && all[1].cause).toBe('edge');
    expect(all[0].id).toBe(all[1].id);
  });
});
