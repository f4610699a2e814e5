import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { clippedMadOfUnitNormal, estimateNoiseLevel, MAD_TO_SIGMA, medianInPlace, selectKth } from '../../core/noiseLevel.js';
import { seededRandom } from '../support/random.js';

// An independent reference for the clipped MAD iteration: every order statistic from a full sort
// (the median as numpy.median defines it: the mean of the two middles for an even count).
function sortedMedian(values: number[]): number {
  const a = [...values].sort((x, y) => x - y);
  const n = a.length;
  return n % 2 === 1 ? a[(n - 1) / 2] : (a[n / 2 - 1] + a[n / 2]) / 2;
}

// The estimate as its definition reads (core/noiseLevel.ts): the first pass unclipped (MAD times
// 1.4826), each later pass over the values within clip sigma of the last median, divided by the MAD
// of a unit normal clipped there; it stops once sigma moves by 0.1 % or less, after 12 passes, or at 0.
function referenceNoise(map: ArrayLike<number>, clip: number, maxSamples: number) {
  const finite = Array.from(map).filter((v) => Number.isFinite(v));
  const stride = Math.max(1, Math.floor(finite.length / maxSamples));
  const values = finite.filter((_, i) => i % stride === 0);
  const pass = (window: [number, number], first: boolean) => {
    const kept = values.filter((v) => window[0] <= v && v <= window[1]);
    if (kept.length === 0) return undefined;
    const centre = sortedMedian(kept);
    const scale = first ? 1 / MAD_TO_SIGMA : clippedMadOfUnitNormal(clip);
    return { median: centre, sigma: sortedMedian(kept.map((v) => Math.abs(v - centre))) / scale, used: kept.length };
  };
  let result = { median: 0, sigma: 0, used: 0 };
  let window: [number, number] = [-Infinity, Infinity];
  for (let k = 0; k < 12; k++) {
    const r = pass(window, k === 0);
    if (!r) break;
    const done = (k > 0 && Math.abs(r.sigma - result.sigma) <= 1e-3 * r.sigma) || r.sigma === 0;
    result = r;
    if (done) break;
    window = [r.median - clip * r.sigma, r.median + clip * r.sigma];
  }
  return result;
}

describe('noise level by order statistics', () => {
  it('selectKth and medianInPlace give the sorted order statistics (ties, even and odd counts)', () => {
    fc.assert(fc.property(fc.array(fc.integer({ min: -5, max: 5 }), { minLength: 1, maxLength: 60 }), (ints) => {
      const values = ints.map((v) => v / 2);
      const sorted = [...values].sort((x, y) => x - y);
      const k = values.length >> 1;
      expect(selectKth(Float64Array.from(values), values.length, k)).toBe(sorted[k]);
      expect(medianInPlace(Float64Array.from(values), values.length)).toBe(sortedMedian(values));
    }));
  });

  it('estimateNoiseLevel equals the iteration with every median from a full sort, value for value', () => {
    // Noise, strong same-sign and opposite-sign field, repeated values (quantised maps), NaN pixels.
    fc.assert(fc.property(
      fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: 1, max: 400 }), fc.constantFrom(2, 3, Infinity), fc.constantFrom(0, 0.1, 1),
      fc.constantFrom(65536, 37, 100),
      (seed, n, clip, quantum, maxSamples) => {
        const rnd = seededRandom(seed);
        const map = Float64Array.from({ length: n }, () => {
          const u = rnd();
          let v = 5 * Math.sqrt(-2 * Math.log(1 - rnd())) * Math.cos(2 * Math.PI * rnd());
          if (u < 0.15) v += 400 * (u < 0.08 ? 1 : -1);
          if (u > 0.97) return NaN;
          return quantum > 0 ? Math.round(v / quantum) * quantum : v;
        });
        if (!map.some((v) => Number.isFinite(v))) return;
        const got = estimateNoiseLevel(map, { clip, maxSamples });
        const want = referenceNoise(map, clip, maxSamples);
        expect(got.sigma).toBe(want.sigma);
        // == : a median of zero may come as -0 from one and +0 from the other (the same value).
        expect(got.median === want.median).toBe(true);
        expect(got.used).toBe(want.used);
      },
    ), { numRuns: 300 });
  });

  it('a map of one repeated value has no noise; a map without a finite value is refused', () => {
    expect(estimateNoiseLevel(new Float64Array(50).fill(3)).sigma).toBe(0);
    expect(() => estimateNoiseLevel(new Float64Array([NaN, Infinity]))).toThrow(/no finite value/);
  });
});
