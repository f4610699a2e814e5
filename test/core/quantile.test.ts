import { describe, expect, it } from 'vitest';
import { median, quantile, upperMedian } from '../../core/quantile.js';

describe('median, upperMedian, quantile (core/quantile.ts)', () => {
  it('median: the middle value, or the mean of the two middles', () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median([4, 1, 3, 2])).toBe(2.5);
    expect(median(Float64Array.of(0.5, 10, 2, 7.25))).toBe(4.625); // numpy.median (Debian python3-numpy): 4.625
    expect(median([-5, 100, 1e-3])).toBe(1e-3); // numeric order, not string order
  });

  it('upperMedian: the value at sorted index floor(n/2)', () => {
    expect(upperMedian([4, 1, 3, 2])).toBe(3);
    expect(upperMedian([3, 1, 2])).toBe(2);
    expect(upperMedian([720, 720, 1440])).toBe(720);
  });

  it('quantile: type 7 (linear between order statistics), as numpy.quantile', () => {
    // numpy.quantile (Debian python3-numpy, default method 'linear'):
    // [1,2,3,4,5] q=0.25 -> 2.0; [0.5,10,2,7.25] q=0.3 -> 1.85, q=0.9 -> 9.175
    expect(quantile([1, 2, 3, 4, 5], 0.25)).toBe(2);
    expect(quantile([0.5, 10, 2, 7.25], 0.3)).toBeCloseTo(1.85, 14);
    expect(quantile([0.5, 10, 2, 7.25], 0.9)).toBeCloseTo(9.175, 14);
    expect(quantile([0.5, 10, 2, 7.25], 0)).toBe(0.5);
    expect(quantile([0.5, 10, 2, 7.25], 1)).toBe(10);
    expect(quantile([7], 0.9)).toBe(7);
    expect(() => quantile([1], 1.5)).toThrow(RangeError);
    expect(() => quantile([1], NaN)).toThrow(/q = NaN/);
  });

  it('NaN policy: NaN left out, infinities kept, nothing left -> NaN, input unchanged', () => {
    const v = [NaN, 3, NaN, 1, 2];
    expect(median(v)).toBe(2);
    expect(upperMedian([NaN, 4, 1])).toBe(4);
    expect(quantile([NaN, 0, 10], 0.5)).toBe(5);
    expect(v).toEqual([NaN, 3, NaN, 1, 2]);
    expect(median([1, Infinity, Infinity])).toBe(Infinity);
    expect(quantile([-Infinity, 1, 2], 1)).toBe(2);
    expect(median([])).toBeNaN();
    expect(upperMedian([NaN])).toBeNaN();
    expect(quantile([], 0.5)).toBeNaN();
  });
});
