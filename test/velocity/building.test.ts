// The small pieces: windowed sums against the direct double sum (their definition), the
// five-point derivative against polynomials it is exact for, and the sub-pixel peak against a
// sampled Gaussian (which the log-quadratic fit locates exactly).
import { describe, expect, it } from 'vitest';
import { derivativeX, derivativeY } from '../../core/velocity/gradient.js';
import { peakOffset2d } from '../../core/velocity/lct.js';
import { roundFeatures } from '../../core/velocity/roundFeatures.js';
import { gaussianTaps, windowedSum } from '../../core/velocity/windowedSum.js';
import { seededRandom } from '../support/random.js';

describe('windowedSum', () => {
  it('equals the direct sum Sum_d Sum_e kx[d] ky[e] map(x + d, y + e), NaN and outside counted as zero', () => {
    const nx = 13, ny = 9, r = seededRandom(5);
    const map = Float64Array.from({ length: nx * ny }, () => r() - 0.5);
    map[4 * nx + 6] = NaN;
    const kx = gaussianTaps(1.5, 4, 1), ky = gaussianTaps(1.5, 4, 2);
    const out = windowedSum(map, nx, ny, kx, ky);
    for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
      let s = 0;
      for (let e = -4; e <= 4; e++) for (let d = -4; d <= 4; d++) {
        const xx = x + d, yy = y + e;
        if (xx < 0 || yy < 0 || xx >= nx || yy >= ny) continue;
        const v = map[yy * nx + xx];
        if (!Number.isNaN(v)) s += kx[d + 4] * ky[e + 4] * v;
      }
      expect(out[y * nx + x]).toBeCloseTo(s, 12);
    }
    expect(out.every(Number.isFinite)).toBe(true);
  });

  it('taps are w(d) d^power of the Gaussian', () => {
    const t = gaussianTaps(2, 3, 1);
    expect(t.length).toBe(7);
    expect(t[3]).toBe(0);
    expect(t[5]).toBeCloseTo(2 * Math.exp(-4 / 8), 15);
    expect(t[1]).toBeCloseTo(-2 * Math.exp(-4 / 8), 15);
  });
});

describe('five-point derivatives', () => {
  it('are exact for a quartic in the interior and NaN on the two outer pixels', () => {
    const nx = 10, ny = 8;
    const f = (x: number, y: number) => 0.3 * x ** 4 - x * x * y + 2 * y ** 3 - 5 * x + 1;
    const map = new Float64Array(nx * ny);
    for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) map[y * nx + x] = f(x, y);
    const gx = derivativeX(map, nx, ny), gy = derivativeY(map, nx, ny);
    for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
      const i = y * nx + x;
      if (x < 2 || x > nx - 3) expect(Number.isNaN(gx[i])).toBe(true);
      // d/dx: the stencil's error term is f^(5) h^4 / 30 = 0 for a quartic.
      else expect(gx[i]).toBeCloseTo(1.2 * x ** 3 - 2 * x * y - 5, 9);
      if (y < 2 || y > ny - 3) expect(Number.isNaN(gy[i])).toBe(true);
      else expect(gy[i]).toBeCloseTo(-x * x + 6 * y * y, 9);
    }
  });
});

describe('sub-pixel peak of the correlation', () => {
  it('locates a sampled, tilted Gaussian peak exactly', () => {
    const px = 0.37, py = -0.21;
    const v = new Float64Array(9);
    for (let j = -1; j <= 1; j++) for (let i = -1; i <= 1; i++) {
      const ex = i - px, ey = j - py;
      v[(j + 1) * 3 + i + 1] = 5 * Math.exp(-(1.1 * ex * ex + 0.8 * ex * ey + 0.6 * ey * ey));
    }
    const off = peakOffset2d(v)!;
    expect(off.dx).toBeCloseTo(px, 12);
    expect(off.dy).toBeCloseTo(py, 12);
    // a saddle or a valley is no peak
    expect(peakOffset2d([1, 2, 1, 2, 1, 2, 1, 2, 1])).toBeUndefined();
  });
});

describe('round features', () => {
  it('finds a round concentration and not an elongated one', () => {
    const nx = 60, ny = 40;
    const bn = new Float64Array(nx * ny);
    for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
      bn[y * nx + x] = 1000 * Math.exp(-((x - 15) ** 2 + (y - 20) ** 2) / 18)
        - 1000 * Math.exp(-((x - 42) ** 2) / 50 - ((y - 20) ** 2) / 8);
    }
    const found = roundFeatures(bn, nx, ny, 100);
    expect(found.length).toBe(1);
    expect(found[0].x).toBeCloseTo(15, 3);
    expect(found[0].y).toBeCloseTo(20, 3);
  });
});
