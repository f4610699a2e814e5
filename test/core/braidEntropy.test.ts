// The braid and its entropy on point-footpoint protocols with known answers:
// - sigma_1 sigma_2^-1 repeated (the first two footpoints exchange clockwise, then the last two
//   counter-clockwise): entropy log((3 + sqrt 5)/2) = 0.9624 per period (Boyland, Aref & Stremler
//   2000); after three periods every pair's net winding is 0 and the entropy 2.887;
// - sigma_1^2 repeated (a pure twist of two footpoints): entropy 0, one turn per period;
// - a rigid rotation of all footpoints: entropy 0 (the full twist is central: periodic);
// - the same braids with an idle fourth strand and a five-strand protocol for the n > 3 bound.

import { describe, expect, it } from 'vitest';
import { braidEntropy } from '../../core/braid/braidEntropy.js';
import { spanEntropy, spanOfFrames, spanTriples } from '../../core/braid/braidSpan.js';
import { chooseProjectionAxis } from '../../core/braid/projectionAxis.js';
import { braidWord } from '../../core/braid/strandCrossings.js';
import { exchangeFrames, GOLDEN, GOLDEN_ENTROPY, rotationFrames, TWIST } from './braidProtocols.js';

const ids = (n: number) => Array.from({ length: n }, (_, k) => k + 1);
const spanOf = (frames: ReturnType<typeof exchangeFrames>, n: number) => spanOfFrames(frames, ids(n), chooseProjectionAxis(frames).angle);

describe('braid entropy of point-footpoint protocols', () => {
  it('sigma_1 sigma_2^-1: 0.962 per period within 1% (10 periods, and each period alone)', () => {
    const frames = exchangeFrames(3, GOLDEN, 10);
    const e = spanEntropy(spanOf(frames, 3));
    expect(e.exact).toBe(true);
    expect(Math.abs(e.entropy / 10 / 0.962 - 1)).toBeLessThan(0.01);
    expect(e.entropy / 10).toBeCloseTo(GOLDEN_ENTROPY, 10);
    // with the x axis: the word reads sigma_1 sigma_2^-1 itself
    const onX = frames.map((f) => ({ ...f, y: Array.from(f.y, (v, k) => v + 1e-3 * k) }));
    expect(braidWord(onX.slice(0, 17), 0).map((c) => c.sign * c.position)).toEqual([1, -2]);
  });
  it('three periods: every pair winds 0 (within 0.02 turn), entropy 2.887', () => {
    const span = spanOf(exchangeFrames(3, GOLDEN, 3), 3);
    expect(spanEntropy(span).entropy).toBeCloseTo(3 * GOLDEN_ENTROPY, 10);
    expect(spanEntropy(span).entropy).toBeCloseTo(2.887, 3);
    const [t] = spanTriples(span);
    for (const w of t.windingTurns) expect(Math.abs(w)).toBeLessThan(0.02);
    expect(t.pairCrossings).toEqual([0, 0, 0]);
    expect(t.trivial).toBe(false);
    expect(t.flagged).toBe(true);
    expect(Math.abs(t.milnor!)).toBe(1);
  });
  it('sigma_1^2: entropy 0, one turn per period (clockwise: -1)', () => {
    for (const periods of [1, 2, 5]) {
      const span = spanOf(exchangeFrames(3, TWIST, periods), 3);
      expect(spanEntropy(span).entropy).toBe(0);
      const [t] = spanTriples(span);
      // the twisting pair is strands 1 and 2 (ids 1, 2)
      const k = t.ids.indexOf(1), j = t.ids.indexOf(2);
      const slot = k + j - 1; // pairs (0,1), (0,2), (1,2) -> slots 0, 1, 2
      expect(t.windingTurns[slot]).toBeCloseTo(-periods, 10);
      expect(t.flagged).toBe(false);
    }
    // counter-clockwise: +1 per period
    const ccw = spanTriples(spanOf(exchangeFrames(3, [{ position: 1, sign: -1 }, { position: 1, sign: -1 }], 3), 3))[0];
    expect(Math.max(...ccw.windingTurns)).toBeCloseTo(3, 10);
  });
  it('a rigid rotation: entropy 0 for 3 and for 6 footpoints', () => {
    for (const n of [3, 6]) {
      const span = spanOf(rotationFrames(n, 2.5, 60), n);
      expect(span.generators).toBeGreaterThan(0);
      expect(spanEntropy(span).entropy).toBeLessThan(1e-9);
      for (const t of spanTriples(span)) expect(t.entropy).toBe(0);
    }
  });
  it('more strands: the bound finds the golden braid among four and a five-strand protocol', () => {
    const four = spanEntropy(spanOf(exchangeFrames(4, GOLDEN, 3), 4));
    expect(four.exact).toBe(false);
    expect(four.entropy).toBeCloseTo(3 * GOLDEN_ENTROPY, 8);
    // sigma_1 sigma_2^-1 sigma_3 sigma_4^-1 on 5 strands: larger than its golden 3-strand part
    const word = [{ position: 1, sign: 1 as const }, { position: 2, sign: -1 as const }, { position: 3, sign: 1 as const }, { position: 4, sign: -1 as const }];
    const five = braidEntropy(5, Array.from({ length: 6 }, () => word).flat());
    expect(five.entropy / 6).toBeGreaterThan(GOLDEN_ENTROPY);
  });
  it('entropy of a braid and of its inverse, mirror and conjugates agree', () => {
    const w = [{ position: 1, sign: 1 as const }, { position: 2, sign: -1 as const }, { position: 1, sign: 1 as const }, { position: 2, sign: 1 as const }, { position: 2, sign: -1 as const }, { position: 1, sign: -1 as const }, { position: 2, sign: -1 as const }];
    const e = braidEntropy(3, w).entropy;
    expect(e).toBeGreaterThan(0);
    const inv = [...w].reverse().map((g) => ({ position: g.position, sign: (-g.sign) as 1 | -1 }));
    const mirror = w.map((g) => ({ position: g.position, sign: (-g.sign) as 1 | -1 }));
    const conj = [{ position: 2, sign: 1 as const }, ...w, { position: 2, sign: -1 as const }];
    for (const v of [inv, mirror, conj]) expect(braidEntropy(3, v).entropy).toBeCloseTo(e, 10);
  });
  it('centroid noise: on the chosen axis the same entropy', () => {
    // 10 periods with every position jittered by a seeded 0.06 spacing (1-sigma), still frames at
    // both ends. (On the y axis, across which the still frames line the footpoints up, the jitter
    // makes them flicker across each other: in the middle of the span each flicker is a
    // sigma sigma^-1 pair, the same braid, but at its ends it changes the open braid: 9.03 instead of
    // 9.62 in this scene, docs/braids.md "Limits". The axis chooser is there to avoid that.)
    let seed = 19;
    const u = () => { seed = (seed * 16807) % 2147483647; return seed / 2147483647; };
    const gauss = () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
    const clean = exchangeFrames(3, GOLDEN, 10, { rest: 3 });
    const noisy = clean.map((f) => ({ ...f, x: Array.from(f.x, (v) => v + 0.06 * gauss()), y: Array.from(f.y, (v) => v + 0.06 * gauss()) }));
    const axis = chooseProjectionAxis(noisy).angle;
    expect(spanEntropy(spanOfFrames(noisy, ids(3), axis)).entropy).toBeCloseTo(10 * GOLDEN_ENTROPY, 9);
    const across = spanOfFrames(noisy, ids(3), Math.PI / 2);
    expect(across.generators).toBeGreaterThan(30);
    expect(spanEntropy(across).entropy).toBeCloseTo(9.0315, 3);
  });
  it('chooses an axis on which no two footpoints share a coordinate at any frame', () => {
    // steps = 2: a frame falls exactly at the quarter turn, where the pair shares x
    const frames = exchangeFrames(3, GOLDEN, 2, { steps: 2 });
    const axis = chooseProjectionAxis(frames);
    expect(axis.angle).not.toBe(0);
    expect(axis.minGap).toBeGreaterThan(0.05);
    expect(spanEntropy(spanOfFrames(frames, ids(3), axis.angle)).entropy).toBeCloseTo(2 * GOLDEN_ENTROPY, 10);
  });
});
