// The unsigned flux of a sample (core/rateSample.ts): sum of |Bn| dA over pixels at or above 3
// noise units. Truths: the flux of a Gaussian spot above a floor f is 2 pi s^2 (B0 - f) (the
// integral of B0 exp(-r^2 / 2 s^2) over the disc where it exceeds f); noise alone above 3 sigma
// adds 2 sigma phi(3) = 0.00886 sigma per pixel (phi the standard normal density), against 0.798
// sigma per pixel with no floor.
import { describe, expect, it } from 'vitest';
import { UNSIGNED_FLUX_FLOOR_NOISE, unsignedFlux } from '../../core/rateSample.js';
import { measureRate } from '../../core/measureRate.js';
import { pixelAreaCm2 } from '../../core/units.js';
import { seededNormal } from '../support/random.js';
import { spotFrame } from '../support/scenes.js';

describe('unsigned flux', () => {
  it('two spots of opposite sign: 2 pi s^2 (B0 - f) each, within the sampling of the floor\'s edge', () => {
    const d = 0.36, s = 3 * d, noiseG = 5;
    const f = spotFrame(96, 64, d, [{ x: 30 * d, y: 32 * d, peak: 2000, sigma: s }, { x: 66 * d, y: 32 * d, peak: -1500, sigma: s }]);
    const floor = UNSIGNED_FLUX_FLOOR_NOISE * noiseG;
    const r = measureRate({ frame: f, labels: null, noiseG });
    const sCm = s * 1e8;
    const truth = 2 * Math.PI * sCm * sCm * ((2000 - floor) + (1500 - floor));
    // The floor's edge is a ring of about 2 pi R pixels, each counted whole or not: at most f per
    // ring pixel, i.e. R f / (s^2 (B0 - f)) of a spot's flux (R where the spot falls to f).
    const bound = (b0: number) => { const rPx = 3 * Math.sqrt(2 * Math.log(b0 / floor)); return (rPx * floor) / (9 * (b0 - floor)); };
    expect(Math.abs(r.sample.unsignedFlux! / truth - 1)).toBeLessThan(Math.max(bound(2000), bound(1500)));
    // Without a noise level (0): every valid pixel counts, the wings too: 2 pi s^2 B0 each.
    const all = unsignedFlux(f.bn, d, d, 0);
    expect(Math.abs(all / (2 * Math.PI * sCm * sCm * 3500) - 1)).toBeLessThan(1e-6);
  });

  it('noise alone: the 3-sigma floor keeps 0.00886 sigma per pixel of it (not 0.8)', () => {
    const n = 256, sigma = 8, d = 0.36;
    const rnd = seededNormal(7);
    const bn = new Float64Array(n * n).map(() => sigma * rnd());
    bn[5] = NaN;
    // The noise level given (the estimator's own error is not what this checks).
    const r = measureRate({ frame: { time: 0, nx: n, ny: n, dx: d, dy: d, bn, vx: new Float64Array(n * n), vy: new Float64Array(n * n) }, labels: null, noiseG: sigma });
    const perPixel = r.sample.unsignedFlux! / (pixelAreaCm2(d, d) * (n * n - 1) * sigma);
    // Per-pixel variance of |n| above 3 sigma is 2 (3 phi(3) + Q(3)) sigma^2 = 0.0293 sigma^2: the
    // mean over 65535 pixels scatters by 0.00067 sigma; four of those.
    expect(Math.abs(perPixel - 0.00886)).toBeLessThan(4 * 0.00067);
    expect(unsignedFlux(bn, d, d, 0) / (pixelAreaCm2(d, d) * (n * n - 1) * sigma)).toBeGreaterThan(0.75);
  });
});
