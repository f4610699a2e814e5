// The reduced Burau matrices are a representation of the braid group (the blocks are written from
// memory of Birman 1974; these relations are what makes them right): sigma_i sigma_i^-1 = 1,
// sigma_i sigma_i+1 sigma_i = sigma_i+1 sigma_i sigma_i+1, sigma_i sigma_j = sigma_j sigma_i for
// |i - j| >= 2, at random t and at t = -1 with integers; the spectral radius by Gelfand's formula
// against closed forms.

import { describe, expect, it } from 'vitest';
import { burauComplex, burauInteger } from '../../core/braid/burauMatrix.js';
import { bigintLog, logSpectralRadius, sl2LogSpectralRadius } from '../../core/braid/spectralRadius.js';

type G = { position: number; sign: 1 | -1 };
const g = (p: number, s: 1 | -1 = 1): G => ({ position: p, sign: s });
const value = (n: number, w: G[], re: number, im: number) => {
  const m = burauComplex(n, w, re, im);
  const k = Math.exp(m.logScale);
  return { re: Array.from(m.re, (v) => v * k), im: Array.from(m.im, (v) => v * k) };
};

describe('reduced Burau representation', () => {
  const ts = [{ re: 0.3, im: 0.8 }, { re: -1.7, im: 0.4 }, { re: Math.cos(2), im: Math.sin(2) }];
  for (const n of [3, 4, 5, 6]) {
    it(`satisfies the braid relations on ${n} strands`, () => {
      for (const t of ts) {
        const same = (a: G[], b: G[]) => {
          const x = value(n, a, t.re, t.im), y = value(n, b, t.re, t.im);
          x.re.forEach((v, k) => expect(v).toBeCloseTo(y.re[k], 10));
          x.im.forEach((v, k) => expect(v).toBeCloseTo(y.im[k], 10));
        };
        for (let i = 1; i < n; i++) {
          same([g(i), g(i, -1)], []);
          same([g(i, -1), g(i)], []);
          if (i + 1 < n) same([g(i), g(i + 1), g(i)], [g(i + 1), g(i), g(i + 1)]);
          for (let j = i + 2; j < n; j++) same([g(i), g(j)], [g(j), g(i)]);
        }
        // a non-relation stays unequal (the test can fail)
        const a = value(n, [g(1), g(2)], t.re, t.im), b = value(n, [g(2), g(1)], t.re, t.im);
        expect(a.re.some((v, k) => Math.abs(v - b.re[k]) > 1e-6) || a.im.some((v, k) => Math.abs(v - b.im[k]) > 1e-6)).toBe(true);
      }
    });
    it(`at t = -1 the integers equal the complex form (${n} strands)`, () => {
      const w = [g(1), g(2, -1), g(n - 1), g(1, -1), g(2), g(2), g(n - 1, -1)];
      const exact = burauInteger(n, w).map(Number);
      const c = value(n, w, -1, 0);
      exact.forEach((v, k) => { expect(c.re[k]).toBeCloseTo(v, 9); expect(c.im[k]).toBe(0); });
    });
  }
  it('sigma_1 sigma_2^-1 at t = -1 is [[1, 1], [1, 2]]: spectral radius (3 + sqrt 5) / 2', () => {
    const m = burauInteger(3, [g(1), g(2, -1)]);
    expect(m).toEqual([1n, 1n, 1n, 2n]);
    expect(sl2LogSpectralRadius(m)).toBeCloseTo(Math.log((3 + Math.sqrt(5)) / 2), 14);
  });
  it('takes the spectral radius of rotations, Jordan blocks and huge products', () => {
    // rotation by 1 rad times 3: radius 3, eigenvalues a complex pair of equal modulus
    const rot = { size: 2, re: Float64Array.from([3 * Math.cos(1), -3 * Math.sin(1), 3 * Math.sin(1), 3 * Math.cos(1)]), im: new Float64Array(4), logScale: 0 };
    expect(logSpectralRadius(rot)).toBeCloseTo(Math.log(3), 12);
    // a Jordan block: powers grow like m, so 40 squarings leave 40 log 2 / 2^40 = 2.52e-11
    const jordan = { size: 2, re: Float64Array.from([1, 1, 0, 1]), im: new Float64Array(4), logScale: 5 };
    expect(logSpectralRadius(jordan) - 5).toBeCloseTo((40 * Math.LN2) / 2 ** 40, 13);
    // 2000 periods of the golden braid: entries far beyond double range, exact log
    const w = Array.from({ length: 2000 }, () => [g(1), g(2, -1)]).flat();
    expect(sl2LogSpectralRadius(burauInteger(3, w))).toBeCloseTo(2000 * Math.log((3 + Math.sqrt(5)) / 2), 8);
    expect(bigintLog(10n ** 400n)).toBeCloseTo(400 * Math.LN10, 9);
  });
  it('refuses a generator the group does not have', () => {
    expect(() => burauInteger(3, [g(3)])).toThrow(/sigma_3 is not a generator of the braid group on 3 strands/);
  });
});
