// The noise sigma of the spherical rate (core/sphere/sphericalRateNoise.ts): its derivative against
// finite differences of the rate, and its sigma against the scatter of noise realisations.
import { describe, expect, it } from 'vitest';
import { potentialGradients } from '../../core/sphere/potentialGradient.js';
import { harmonicGradients } from '../../core/sphere/sphericalHarmonics.js';
import { sphericalRateSigma } from '../../core/sphere/sphericalRateNoise.js';
import { sphericalHelicityFlux } from '../../core/sphere/sphericalHelicityFlux.js';
import { sphericalTransport } from '../../core/sphere/sphericalTransport.js';
import { seededNormal } from '../support/random.js';
import { spotScene, wholeSunGrid, patchGrid } from './sphereScenes.js';

describe('noise sigma of the rate on the sphere', () => {
  it('matches the scatter of 200 noise realisations within 15% (whole Sun by pair sums and by harmonics, an oblique patch)', () => {
    for (const [g, harmonics] of [[wholeSunGrid(24), false], [wholeSunGrid(24), true], [patchGrid(150, -20, 20, 40, 'CEA', true), false]] as const) {
      const gradient = (b: Float64Array) => (harmonics ? harmonicGradients(g, [b])[0] : potentialGradients(g, [b])[0]);
      const lon = g.wholeSun ? 120 : 150, lat = g.wholeSun ? 20 : -20, w = g.wholeSun ? 10 : 2;
      const s = spotScene(g, [
        { lonDeg: lon - w, latDeg: lat, peak: 800, sigmaDeg: w / 1.5, omega: 2e-6 }, { lonDeg: lon + w, latDeg: lat + w / 2, peak: -700, sigmaDeg: w / 1.5, omega: -1e-6 },
      ]);
      const vx = s.vx.map((v, i) => v + 0.05 * Math.sin(i * 0.1)), vy = s.vy.map((v, i) => v + 0.04 * Math.cos(i * 0.07));
      const sigmaG = 40;
      const t = sphericalTransport(g, s.bn, vx, vy);
      const predicted = sphericalRateSigma(g, t, gradient(t.bn), sigmaG, !harmonics);
      const noise = seededNormal(7);
      const rates: number[] = [];
      for (let k = 0; k < 200; k++) {
        const b = s.bn.map((v) => v + sigmaG * noise());
        const tb = sphericalTransport(g, b, vx, vy);
        rates.push(sphericalHelicityFlux(g, tb, gradient(tb.bn), !harmonics).total);
      }
      const mean = rates.reduce((a, b) => a + b, 0) / rates.length;
      const sd = Math.sqrt(rates.reduce((a, b) => a + (b - mean) ** 2, 0) / (rates.length - 1));
      // 200 realisations measure a standard deviation to 5% (1/sqrt(2(n-1))); 15% is three of those.
      expect(Math.abs(sd / predicted - 1)).toBeLessThan(0.15);
    }
  }, 60000);
});
