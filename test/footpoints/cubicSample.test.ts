// The pattern fit's two samplers (core/footpoints/cubicSample.ts): the angle scan's value-only
// sampler must give the very number of the full one, and refuse the same samples.
import { describe, expect, it } from 'vitest';
import { sampleCubic, sampleCubicValue } from '../../core/footpoints/cubicSample.js';

describe('sampleCubicValue', () => {
  const nx = 23, ny = 17;
  // A smooth field with a NaN pixel, and a random part so that no weight pattern hides a slip.
  const map = Float64Array.from({ length: nx * ny }, (_, i) => 300 * Math.sin(0.37 * (i % nx)) * Math.cos(0.23 * Math.floor(i / nx)) + ((i * 7919) % 101) - 50);
  map[8 * nx + 11] = NaN;

  it('is bit for bit the value of sampleCubic, NaN exactly where sampleCubic refuses (grid edge, NaN in the support)', () => {
    const out = new Float64Array(3);
    let valid = 0, refused = 0;
    for (let k = 0; k < 4000; k++) {
      const px = -1.5 + (k * 0.6180339887 % 1) * (nx + 2), py = -1.5 + (k * 0.7548776662 % 1) * (ny + 2);
      const ok = sampleCubic(map, nx, ny, px, py, out);
      const v = sampleCubicValue(map, nx, ny, px, py);
      if (ok) { valid++; expect(Object.is(v, out[0])).toBe(true); } else { refused++; expect(v).toBeNaN(); }
    }
    // Both kinds were exercised.
    expect(valid).toBeGreaterThan(2000);
    expect(refused).toBeGreaterThan(300);
    // On a grid node Catmull-Rom returns the node (its weights are 0, 1, 0, 0).
    expect(sampleCubicValue(map, nx, ny, 5, 4)).toBe(map[4 * nx + 5]);
  });
});
