import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { clippedMadOfUnitNormal, estimateNoiseLevel, MAD_TO_SIGMA } from '../../core/noiseLevel.js';
import { segmentFootpoints } from '../../core/footpoints/segmentation.js';
import { smoothMap } from '../../core/footpoints/smoothing.js';
import { createWindowedSumArena, windowedSumArenaBytes } from '../../core/velocity/simdWindowedSum.js';
import { regionProperties } from '../../core/footpoints/regionProperties.js';
import type { Spot } from './scene.js';
import { sceneField, spotFlux } from './scene.js';
import { seededRandom } from '../support/random.js';

// Reference: scipy.ndimage.gaussian_filter and scipy.stats.norm (Debian's python3-scipy), run by
// test/fixtures/footpoints/make_smoothing_fixture.py, output committed beside it.
interface SmoothingFixture { nx: number; ny: number; map: (number | null)[]; cases: { sigma: number; smoothed: (number | null)[] }[]; complete_cases: { sigma: number; smoothed: number[] }[]; mad_to_sigma: number; clipped_mad: { k: number; m: number }[] }
const fx = JSON.parse(readFileSync(new URL('../fixtures/footpoints/smoothing_fixture.json', import.meta.url), 'utf8')) as SmoothingFixture;

describe('noise level and smoothing', () => {
  it('the MAD-to-sigma factor is 1/Phi^-1(3/4) (scipy.stats.norm.ppf)', () => {
    expect(MAD_TO_SIGMA).toBeCloseTo(fx.mad_to_sigma, 14);
    expect(1 / clippedMadOfUnitNormal(Infinity)).toBe(MAD_TO_SIGMA);
  });

  it('the MAD of clipped Gaussian noise matches scipy.stats.norm (erf approximation: 1e-6)', () => {
    for (const { k, m } of fx.clipped_mad) expect(Math.abs(clippedMadOfUnitNormal(k) - m)).toBeLessThan(1e-6);
  });

  it('pure Gaussian noise: the clipped estimate is unbiased (mean of 8 maps within 1 %)', () => {
    let sum = 0;
    for (let seed = 1; seed <= 8; seed++) sum += estimateNoiseLevel(sceneField({ nx: 128, ny: 128, dx: 1, dy: 1 }, [], 9, seed)).sigma / 9;
    expect(Math.abs(sum / 8 - 1)).toBeLessThan(0.01);
  });

  it('NaN-aware smoothing equals scipy gaussian_filter(f m)/gaussian_filter(m), NaN kept', () => {
    const map = Float64Array.from(fx.map, (v) => (v === null ? NaN : v));
    for (const c of fx.cases) {
      const out = smoothMap(map, fx.nx, fx.ny, c.sigma);
      c.smoothed.forEach((v, i) => {
        if (v === null) expect(Number.isNaN(out[i])).toBe(true);
        else expect(Math.abs(out[i] - v)).toBeLessThan(1e-10);
      });
    }
  });

  it('without missing pixels (the faster path) it equals scipy as well', () => {
    const map = Float64Array.from(fx.map, (v) => (v === null ? 0 : v));
    for (const c of fx.complete_cases) {
      const out = smoothMap(map, fx.nx, fx.ny, c.sigma);
      c.smoothed.forEach((v, i) => expect(Math.abs(out[i] - v)).toBeLessThan(1e-10));
    }
  });

  it('in the thread\'s windowed-sum arena (SIMD rows, memory left dirty by an earlier user) it gives the same numbers bit for bit', () => {
    const nx = 97, ny = 64, r = seededRandom(11);
    const complete = Float64Array.from({ length: nx * ny }, () => 200 * (r() - 0.5));
    const holed = Float64Array.from(complete, (v, i) => (i % 13 === 0 || (i > 900 && i < 1200) ? NaN : v));
    const arena = createWindowedSumArena(windowedSumArenaBytes([nx * ny, nx * ny, nx * ny, nx * ny, nx, nx]));
    if (!arena) return; // no WebAssembly SIMD here: the plain path is the one the tests above check
    const dirty = () => { arena.reset(); arena.alloc(4 * nx * ny + 2 * nx).fill(-7.5e300); };
    for (const map of [complete, holed]) {
      for (const sigma of [0.7, 1, 2.5]) {
        const plain = smoothMap(map, nx, ny, sigma);
        dirty();
        const simd = smoothMap(map, nx, ny, sigma, arena);
        expect(Array.from(simd)).toEqual(Array.from(plain));
      }
    }
    // The scipy fixture through the arena as well.
    const fixtureMap = Float64Array.from(fx.map, (v) => (v === null ? NaN : v));
    const big = createWindowedSumArena(windowedSumArenaBytes(Array(6).fill(fx.nx * fx.ny)))!;
    for (const c of fx.cases) {
      const out = smoothMap(fixtureMap, fx.nx, fx.ny, c.sigma, big);
      c.smoothed.forEach((v, i) => (v === null ? expect(Number.isNaN(out[i])).toBe(true) : expect(Math.abs(out[i] - v)).toBeLessThan(1e-10)));
    }
    // An arena too small for the map is not used (and not overrun).
    const small = createWindowedSumArena(windowedSumArenaBytes([nx]))!;
    expect(Array.from(smoothMap(holed, nx, ny, 1, small))).toEqual(Array.from(smoothMap(holed, nx, ny, 1)));
  });

  it('noise from the frame: footpoints on a sixth of the map (above 5 sigma) bias it by under 8 %', () => {
    const g = { nx: 128, ny: 128, dx: 0.5, dy: 0.5 };
    const r = seededRandom(5);
    const spots: Spot[] = [];
    for (let k = 0; k < 20; k++) spots.push({ x: 4 + 56 * r(), y: 4 + 56 * r(), a: 1 + r(), b: 1 + r(), angle: 3 * r(), peak: (r() < 0.5 ? -1 : 1) * (200 + 1500 * r()) });
    const bn = sceneField(g, spots, 9, 6);
    let strong = 0;
    const clean = sceneField(g, spots);
    for (const v of clean) if (Math.abs(v) > 45) strong++;
    expect(strong / bn.length).toBeGreaterThan(0.16);
    // The weak tails of the spots (below 3 sigma) cannot be told from noise: they are what is left.
    expect(Math.abs(estimateNoiseLevel(bn).sigma / 9 - 1)).toBeLessThan(0.08);
    // Without clipping the strong field inflates the plain MAD.
    expect(estimateNoiseLevel(bn, { clip: Infinity }).sigma / 9).toBeGreaterThan(1.08);
  });
});

describe('segmentation', () => {
  const g = { nx: 96, ny: 64, dx: 0.5, dy: 0.5 };
  const at = (x: number, y: number, s: number, peak: number): Spot => ({ x, y, a: s, b: s, angle: 0, peak });

  it('splits touching same-sign concentrations along the saddle, with the flux of each', () => {
    const spots = [at(15, 16, 1.5, 1000), at(21, 16, 1.5, 800)]; // 4 widths apart, touching at threshold
    const seg = segmentFootpoints(sceneField(g, spots, 4, 1), g, { noise: 4 });
    expect(seg.count).toBe(2);
    const props = regionProperties(seg.labels, sceneField(g, spots, 4, 1), g);
    // The two regions touch (one connected component above threshold)...
    let touching = false;
    for (let i = 0; i < seg.labels.length - 1; i++) if (seg.labels[i] * seg.labels[i + 1] === 2) touching = true;
    expect(touching).toBe(true);
    // ...and each holds its own spot's flux to 3 % (the stronger spot's tail across the saddle
    // outweighs the weaker one's).
    expect(Math.abs(props[0].flux / spotFlux(spots[0]) - 1)).toBeLessThan(0.03);
    expect(Math.abs(props[1].flux / spotFlux(spots[1]) - 1)).toBeLessThan(0.03);
    expect(props[0].fluxWeighted.x).toBeCloseTo(15, 0);
    expect(props[1].fluxWeighted.x).toBeCloseTo(21, 0);
  });

  it('split: false keeps the touching pair as one connected patch', () => {
    const spots = [at(15, 16, 1.5, 1000), at(21, 16, 1.5, 800)];
    const bn = sceneField(g, spots, 4, 1);
    const seg = segmentFootpoints(bn, g, { noise: 4, split: false });
    expect(seg.count).toBe(1);
    const props = regionProperties(seg.labels, bn, g);
    expect(Math.abs(props[0].flux / (spotFlux(spots[0]) + spotFlux(spots[1])) - 1)).toBeLessThan(0.01);
  });

  it('keeps one footpoint when two spots are closer than two widths (no saddle)', () => {
    const seg = segmentFootpoints(sceneField(g, [at(15, 16, 1.5, 1000), at(17.5, 16, 1.5, 800)], 4, 2), g, { noise: 4 });
    expect(seg.count).toBe(1);
  });

  it('noise maxima on a broad plateau are merged by the saddle depth, not kept as footpoints', () => {
    const bn = sceneField(g, [at(24, 32, 5, 120)], 10, 3);
    expect(segmentFootpoints(bn, g, { noise: 10, smoothing: 0 }).count).toBe(1);
    // With no saddle criterion (neither depth nor ratio) every noise bump would be a footpoint.
    expect(segmentFootpoints(bn, g, { noise: 10, smoothing: 0, saddleDepth: 0, saddleRatio: 0 }).count).toBeGreaterThan(3);
  });

  it('one body with several cores is one footpoint; spots whose saddle is below half the lower peak stay two', () => {
    // An elliptical core with two smaller cores on its major axis (the shape of a spot with several
    // umbrae in one penumbra): the saddles dip 1.5% below the smaller cores, far more than 3 noise
    // units, but stand above half their height.
    const body = sceneField(g, [{ x: 24, y: 16, a: 4.4, b: 3, angle: 0, peak: 1500 }, at(30, 16, 2, 1100), at(18, 16, 2, 1100)], 5, 4);
    expect(segmentFootpoints(body, g, { noise: 5 }).count).toBe(1);
    expect(segmentFootpoints(body, g, { noise: 5, saddleRatio: 0 }).count).toBe(3);
    // Two equal round spots 4 widths apart: saddle 2 exp(-2) = 0.27 of the peak: two footpoints.
    const two = sceneField(g, [at(18, 16, 1.5, 1000), at(24, 16, 1.5, 1000)], 5, 5);
    expect(segmentFootpoints(two, g, { noise: 5 }).count).toBe(2);
  });

  it('opposite polarities side by side stay apart; minimum area and flux drop small concentrations', () => {
    const spots = [at(15, 16, 1.5, 1000), at(19, 16, 1.5, -1000), at(40, 24, 0.4, 200), at(30, 24, 1.0, 90)];
    const bn = sceneField(g, spots, 4, 4);
    const seg = segmentFootpoints(bn, g, { noise: 4 });
    const props = regionProperties(seg.labels, bn, g);
    expect(props.map((p) => p.polarity)).toEqual([1, -1, 1, 1]);
    const tiny = props.find((p) => Math.abs(p.fluxWeighted.x - 40) < 1)!;
    const weak = props.find((p) => Math.abs(p.fluxWeighted.x - 30) < 1)!;
    expect(tiny.pixels).toBeLessThan(weak.pixels);
    const big = segmentFootpoints(bn, g, { noise: 4, minPixels: tiny.pixels + 1 });
    expect(big.count).toBe(3);
    const strong = segmentFootpoints(bn, g, { noise: 4, minPixels: tiny.pixels + 1, minFlux: 1.01 * Math.abs(weak.flux) });
    expect(strong.count).toBe(2);
  });

  it('a saturated spot (a flat plateau, as in a clipped magnetogram) is one footpoint', () => {
    const bn = sceneField(g, [at(20, 16, 3, 3000), at(40, 16, 2, -2500)], 4, 5).map((v) => Math.max(-1000, Math.min(1000, v)));
    let flat = 0;
    for (const v of bn) if (Math.abs(v) === 1000) flat++;
    expect(flat).toBeGreaterThan(200);
    for (const smoothing of [0, 1]) {
      const seg = segmentFootpoints(bn, g, { noise: 4, smoothing });
      expect(seg.count).toBe(2);
    }
  });

  it('a noise-free map falls back to a noise floor of 1e-3 of the peak', () => {
    const seg = segmentFootpoints(sceneField(g, [at(15, 16, 1.5, 1000)]), g);
    expect(seg.noiseSource).toBe('floor');
    expect(seg.noise).toBeCloseTo(1, 6);
    expect(seg.count).toBe(1);
  });
});
