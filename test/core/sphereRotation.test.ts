// The differential-rotation share: the profile's angular rates against sunpy's diff_rot (Debian's
// python3-sunpy, committed fixture by test/fixtures/sphere/make_rotation_fixture.py), and the
// analytic truth that a rigid rotation injects nothing into a flux-balanced whole Sun.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  CARRINGTON_SIDEREAL_MICRORAD_S, HOWARD_1990_SIDEREAL, angularRate, angularRateSlope, differentialRotationShare, rotationMotion,
} from '../../core/sphere/differentialRotation.js';
import { pixelSpinRate } from '../../core/sphere/pixelSpin.js';
import { sphericalHelicityFlux } from '../../core/sphere/sphericalHelicityFlux.js';
import { nativeVelocity } from '../../core/sphere/sphericalGrid.js';
import { sphericalTransport } from '../../core/sphere/sphericalTransport.js';
import { patchGrid, spotScene, wholeSunGrid } from './sphereScenes.js';

const fx = JSON.parse(readFileSync(new URL('../fixtures/sphere/rotation.json', import.meta.url), 'utf8'));
const D2R = Math.PI / 180;

describe(`rotation profile against sunpy (${fx.generator})`, () => {
  it('Howard et al. 1990 sidereal, and Snodgrass coefficients given as a setting: degrees per day to 1e-12', () => {
    const snodgrass = { a: 2.851, b: -0.343, c: -0.474 };
    fx.latitude_deg.forEach((lat: number, i: number) => {
      const ours = (angularRate(HOWARD_1990_SIDEREAL, lat * D2R) * fx.duration_s) / D2R;
      expect(Math.abs(ours - fx.howard_deg[i])).toBeLessThan(1e-12 * 15);
      const s = (angularRate(snodgrass, lat * D2R) * fx.duration_s) / D2R;
      expect(Math.abs(s - fx.snodgrass_deg[i])).toBeLessThan(1e-12 * 15);
    });
    expect(Math.abs((CARRINGTON_SIDEREAL_MICRORAD_S * 1e-6 * 86400) / D2R - fx.carrington_sidereal_deg_per_day)).toBeLessThan(1e-12);
  });

  it('the slope is the derivative of the rate, and the pixel spin of the profile matches finite differences of its velocity', () => {
    for (const lat of [-60, -20, 0, 15, 45]) {
      const h = 1e-5;
      const numeric = (angularRate(HOWARD_1990_SIDEREAL, lat * D2R + h) - angularRate(HOWARD_1990_SIDEREAL, lat * D2R - h)) / (2 * h);
      expect(Math.abs(angularRateSlope(HOWARD_1990_SIDEREAL, lat * D2R) - numeric)).toBeLessThan(1e-14);
    }
    const g = patchGrid(120, 25, 10, 200, 'CAR');
    const m = rotationMotion(g, HOWARD_1990_SIDEREAL, CARRINGTON_SIDEREAL_MICRORAD_S);
    const { ue, un } = nativeVelocity(g, m.vx, m.vy);
    const fd = pixelSpinRate(g, ue, un, new Uint8Array(g.nx * g.ny).fill(1));
    const i = 100 * g.nx + 100;
    // Central differences over h = 0.05 degree: relative error (h^2 / 6) f'''/f', a few h^2 here.
    const h = 0.05 * D2R;
    expect(Math.abs(fd[i] - m.spin[i])).toBeLessThan(3 * h * h * Math.abs(m.spin[i]));
  });
});

describe('rigid rotation of a flux-balanced whole Sun', () => {
  const spots = [
    { lonDeg: 100, latDeg: 18, peak: 800, sigmaDeg: 3 }, { lonDeg: 110, latDeg: 14, peak: -800, sigmaDeg: 3 },
    { lonDeg: 250, latDeg: -22, peak: -600, sigmaDeg: 4 }, { lonDeg: 262, latDeg: -17, peak: 650, sigmaDeg: 4 },
    { lonDeg: 30, latDeg: 35, peak: 300, sigmaDeg: 5 },
  ];
  const rigid = { a: 2.894, b: 0, c: 0 };
  it('injects nothing: the pair sum is exactly (Omega/2pi) Sum sin(lat) Phi^2 (shrinking with the pixels), cancelled by the pixels\' own spin; < 1e-3 of the differential-rotation share at 360 x 180', () => {
    let lastPairs = Infinity, lastFd = Infinity;
    for (const ny of [45, 90, 180]) {
      const g = wholeSunGrid(ny);
      const s = spotScene(g, spots, true);
      const m = rotationMotion(g, rigid, 0);
      const t = sphericalTransport(g, s.bn, m.vx, m.vy);
      const f = sphericalHelicityFlux(g, t); // pixel spin by finite differences of the velocity
      const exact = differentialRotationShare(g, t, f.gradient, rigid, 0); // analytic pixel spin
      const share = differentialRotationShare(g, t, f.gradient, HOWARD_1990_SIDEREAL, 0);
      let expected = 0;
      for (let i = 0; i < s.bn.length; i++) {
        const phi = s.bn[i] * g.rowAreaMm2[Math.floor(i / g.nx)] * 1e16;
        expected += ((2.894e-6 / (2 * Math.PI)) * Math.sin(g.latDeg[i] * D2R)) * phi * phi;
      }
      expect(Math.abs(exact.pairs - expected)).toBeLessThan(1e-9 * Math.abs(expected));
      expect(Math.abs(exact.total)).toBeLessThan(1e-10 * Math.abs(share.total));
      // Without the pixels' own spin the discrete sum converges as 1 / pixels (factor 4 per halving).
      expect(Math.abs(f.pairs)).toBeLessThan(lastPairs / 3.5);
      // With it from finite differences, as (pixel)^2 / pixels: factor 16.
      expect(Math.abs(f.total)).toBeLessThan(lastFd / 12);
      lastPairs = Math.abs(f.pairs); lastFd = Math.abs(f.total);
      if (ny === 180) {
        expect(Math.abs(f.total) / Math.abs(share.total)).toBeLessThan(1e-3);
        expect(Math.abs(f.pairs) / Math.abs(share.total)).toBeGreaterThan(1e-3); // the pairs alone would not do
      }
    }
  }, 60000);
});
