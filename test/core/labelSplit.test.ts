import { describe, expect, it } from 'vitest';
import { createFluxKernel } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { helicityFlux } from '../../core/helicityFlux.js';
import { splitByLabels } from '../../core/labelSplit.js';
import type { SplitCache } from '../../core/labelSplit.js';
import { CM_PER_KM, CM_PER_MM } from '../../core/units.js';
import { seededRandom } from '../support/random.js';

// The double sum split by label pair, written out from the definition (Pariat et al. 2005 for
// the pair weight; Longcope, Ravindra & Barnes 2007 for the split into spin and braiding).
function brutePairs(nx: number, ny: number, d: number, bn: Float64Array, ux: Float64Array, uy: Float64Array, labels: Int32Array) {
  const m = new Map<string, number>();
  const dA = (d * CM_PER_MM) ** 2;
  for (let a = 0; a < nx * ny; a++) for (let b = 0; b < nx * ny; b++) {
    if (a === b) continue;
    const X = ((a % nx) - (b % nx)) * d * CM_PER_MM, Y = (Math.floor(a / nx) - Math.floor(b / nx)) * d * CM_PER_MM;
    const rate = (X * (uy[a] - uy[b]) - Y * (ux[a] - ux[b])) * CM_PER_KM / (X * X + Y * Y);
    const w = (-1 / (2 * Math.PI)) * rate * bn[a] * bn[b] * dA * dA;
    const la = labels[a], lb = labels[b];
    const key = la === 0 || lb === 0 ? 'bg' : `${Math.min(la, lb)}-${Math.max(la, lb)}`;
    m.set(key, (m.get(key) ?? 0) + w);
  }
  return m;
}

describe('exact split by labels', () => {
  const nx = 14, ny = 11, d = 0.5;
  const r = seededRandom(42);
  const n = nx * ny;
  const bn = Float64Array.from({ length: n }, () => 1500 * (r() - 0.45));
  const vx = Float64Array.from({ length: n }, () => r() - 0.5);
  const vy = Float64Array.from({ length: n }, () => r() - 0.5);
  const labels = Int32Array.from({ length: n }, (_, i) => {
    const x = i % nx, y = Math.floor(i / nx);
    if (x < 4 && y < 4) return 3;
    if (x > 8 && y < 5) return 7;
    if (y > 7 && x > 2 && x < 10) return 9;
    return 0;
  });
  const frame = { time: 0, nx, ny, dx: d, dy: d, bn, vx, vy };
  const kernel = createFluxKernel(frame);
  const t = fluxTransport(frame);
  const brute = brutePairs(nx, ny, d, bn, vx, vy, labels);

  for (const [name, perPixel] of [['direct sums', Infinity], ['per-footpoint FFT', 0], ['mixed', 0.02]] as const) {
    it(`${name}: spin, orbit and background equal the direct double sum, and add up to the total`, () => {
      const s = splitByLabels(kernel, t, labels, { directPairsPerPaddedPixel: perPixel });
      expect(s.ids).toEqual([3, 7, 9]);
      if (perPixel === Infinity) expect(s.convolvedFootpoints).toBe(0);
      if (perPixel === 0) expect(s.convolvedFootpoints).toBe(3);
      const scale = Math.abs(s.total) + Math.abs(s.spinTotal) + Math.abs(s.orbitTotal);
      const close = (a: number, b: number) => expect(Math.abs(a - b) / scale).toBeLessThan(1e-9);
      close(s.spin[0], brute.get('3-3')!);
      close(s.spin[1], brute.get('7-7')!);
      close(s.spin[2], brute.get('9-9')!);
      close(s.orbit[0 * 3 + 1], brute.get('3-7')!);
      close(s.orbit[1 * 3 + 0], brute.get('3-7')!);
      close(s.orbit[0 * 3 + 2], brute.get('3-9')!);
      close(s.orbit[1 * 3 + 2], brute.get('7-9')!);
      close(s.background, brute.get('bg')!);
      close(s.spinTotal + s.orbitTotal + s.background, helicityFlux(kernel, t).total);
    });
  }

  it('a pair budget too small for every pair: spins and totals stay exact, pairs among the largest are kept, the rest are NaN', () => {
    const full = splitByLabels(kernel, t, labels, { directPairsPerPaddedPixel: Infinity });
    expect(full.pairsComplete).toBe(true);
    // Pixel counts: label 3 has 16, 7 has 25, 9 has 21: a budget of 600 pair visits fits 7 with 9 only.
    const part = splitByLabels(kernel, t, labels, { directPairsPerPaddedPixel: Infinity, pairBudget: 600 });
    expect(part.pairsComplete).toBe(false);
    const scale = Math.abs(full.total) + Math.abs(full.spinTotal) + Math.abs(full.orbitTotal);
    for (let a = 0; a < 3; a++) expect(Math.abs(part.spin[a] - full.spin[a]) / scale).toBeLessThan(1e-12);
    expect(Math.abs(part.orbitTotal - full.orbitTotal) / scale).toBeLessThan(1e-9);
    expect(Math.abs(part.background - full.background) / scale).toBeLessThan(1e-9);
    expect(part.orbit[1 * 3 + 2]).toBeCloseTo(full.orbit[1 * 3 + 2], 20);
    expect(Number.isNaN(part.orbit[0 * 3 + 1])).toBe(true);
    expect(Number.isNaN(part.orbit[0 * 3 + 2])).toBe(true);
  });

  it('large footpoints beyond maxFullRows: spins from their bounding boxes equal the direct double sum, the orbit total stays exact', () => {
    const cache: SplitCache = new Map();
    // The row over the whole grid (rows: 'grid'), so that only the other two take box kernels.
    const s = splitByLabels(kernel, t, labels, { directPairsPerPaddedPixel: 0, maxFullRows: 1, cache, rows: 'grid' });
    expect(s.convolvedFootpoints).toBe(3);
    expect(s.pairsComplete).toBe(false);
    const scale = Math.abs(s.total) + Math.abs(s.spinTotal) + Math.abs(s.orbitTotal);
    const close = (a: number, b: number) => expect(Math.abs(a - b) / scale).toBeLessThan(1e-9);
    close(s.spin[0], brute.get('3-3')!);
    close(s.spin[1], brute.get('7-7')!);
    close(s.spin[2], brute.get('9-9')!);
    close(s.orbitTotal, brute.get('3-7')! + brute.get('3-9')! + brute.get('7-9')!);
    close(s.background, brute.get('bg')!);
    // The one full row belongs to the largest footpoint (label 7, 25 pixels): its pairs are known.
    close(s.orbit[0 * 3 + 1], brute.get('3-7')!);
    close(s.orbit[1 * 3 + 2], brute.get('7-9')!);
    expect(Number.isNaN(s.orbit[0 * 3 + 2])).toBe(true);
    // Their spins as pairs with themselves on pair grids (no box kernels): label 3's box (4x4) on
    // 8x8, label 9's (7x3) on 16x8, the largest shared.
    expect(cache.size).toBe(0);
    expect([cache.pairGrids?.maxPx, cache.pairGrids?.maxPy]).toEqual([16, 8]);
  });
});
