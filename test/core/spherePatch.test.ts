// A patch on the sphere against the planar engine (core/helicityFlux.ts): a small patch agrees to
// its curvature error, the error grows as the square of the patch size, and the curvature
// correction measured on a coarse copy recovers the spherical rate of a large patch. Also the sign
// convention on a whole Sun, where no planar engine applies (as test/core/analyticTruths.test.ts).
import { describe, expect, it } from 'vitest';
import { comparePatch, flattenPatch } from '../../core/sphere/patchOnSphere.js';
import { sphericalGrid } from '../../core/sphere/sphericalGrid.js';
import { sphericalHelicityFlux } from '../../core/sphere/sphericalHelicityFlux.js';
import { splitSphericalByLabels } from '../../core/sphere/sphericalSplit.js';
import { sphericalTransport } from '../../core/sphere/sphericalTransport.js';
import { patchGrid, patchScene, spotScene, wholeSunGrid } from './sphereScenes.js';

const D2R = Math.PI / 180;
const kinds = ['orbit', 'spin', 'rotation'] as const;

describe('patch on the sphere and the planar engine', () => {
  it('a 2-degree patch (oblique CEA, centred at latitude 20) agrees with the planar engine to its curvature error, which grows as size^2', () => {
    for (const kind of kinds) {
      const dep: number[] = [];
      for (const size of [2, 10]) {
        const g = patchGrid(150, 20, size, 48, 'CEA', true);
        const sc = patchScene(g, kind, 150, 20, size);
        const c = comparePatch(g, sphericalTransport(g, sc.bn, sc.vx, sc.vy));
        expect(c.coarsening).toBe(1);
        dep.push(Math.abs(c.planarDeparture));
      }
      // The kernels differ by (gamma/2) cot(gamma/2) = 1 - gamma^2/12 at separation gamma; the
      // widest pair of a 2-degree patch is 2.8 degrees apart: 2e-4 at most.
      const gamma = 2 * Math.SQRT2 * D2R;
      expect(dep[0]).toBeLessThan(gamma * gamma / 12);
      // Curvature, not resolution or flattening: the departure scales as size^2 (25 from 2 to 10 degrees).
      expect(dep[1] / dep[0]).toBeGreaterThan(25 / 3);
      expect(dep[1] / dep[0]).toBeLessThan(25 * 3);
    }
  });

  it('the flattened patch is right-handed whatever the signs of CDELT: mirrored keywords give the same planar rate', () => {
    const g = patchGrid(150, 20, 4, 32, 'CEA', true);
    const sc = patchScene(g, 'spin', 150, 20, 4);
    const a = comparePatch(g, sphericalTransport(g, sc.bn, sc.vx, sc.vy));
    // The same sky with longitude decreasing along the columns.
    const h = { CTYPE1: 'CRLN-CEA', CTYPE2: 'CRLT-CEA', CUNIT1: 'deg', CUNIT2: 'deg', CRPIX1: 16.5, CRPIX2: 16.5, CRVAL1: 150, CRVAL2: 20, CDELT1: -4 / 32, CDELT2: 4 / 32 };
    const m = sphericalGrid(h, 32, 32, 'mirrored');
    const s2 = patchScene(m, 'spin', 150, 20, 4);
    const b = comparePatch(m, sphericalTransport(m, s2.bn, s2.vx, s2.vy));
    expect(Math.abs(b.planar - a.planar)).toBeLessThan(1e-9 * Math.abs(a.planar));
    expect(Math.abs(b.sphericalPairs - a.sphericalPairs)).toBeLessThan(1e-9 * Math.abs(a.sphericalPairs));
    const f = flattenPatch(m, sphericalTransport(m, s2.bn, s2.vx, s2.vy));
    expect(f.dx).toBeCloseTo(696 * (4 / 32) * D2R, 9); // native equator: dx = R d phi
  });

  it('a 30-degree patch too large for the exact sum: the correction measured on a 3x coarser copy removes at least 90% of the planar error', () => {
    for (const [proj, oblique] of [['CEA', true], ['CAR', false]] as const) {
      for (const kind of kinds) {
        const g = patchGrid(150, 20, 30, 120, proj, oblique);
        const sc = patchScene(g, kind, 150, 20, 30);
        const t = sphericalTransport(g, sc.bn, sc.vx, sc.vy);
        const exact = comparePatch(g, t, { maxRowPairWork: Infinity });
        const coarse = comparePatch(g, t, { maxRowPairWork: 4e5 });
        expect(exact.coarsening).toBe(1);
        expect(coarse.coarsening).toBeGreaterThan(2);
        expect(Math.abs(coarse.sphericalPairs - exact.sphericalPairs)).toBeLessThan(0.1 * Math.abs(exact.planar - exact.sphericalPairs));
        expect(coarse.planar).toBe(exact.planar);
      }
    }
  }, 30000);
});

describe('sign convention on a whole Sun', () => {
  it('a positive spot turning counter-clockwise at omega: spin = -(omega/2pi) Phi^2 within 1%; the static spot spins not at all', () => {
    const g = wholeSunGrid(180);
    const omega = 1e-5;
    const sc = spotScene(g, [
      { lonDeg: 120, latDeg: 30, peak: 1500, sigmaDeg: 2.5, omega, label: 1 },
      { lonDeg: 200, latDeg: -10, peak: -1500, sigmaDeg: 2.5, label: 2 },
    ]);
    const t = sphericalTransport(g, sc.bn, sc.vx, sc.vy);
    const f = sphericalHelicityFlux(g, t);
    const s = splitSphericalByLabels(g, t, sc.labels, { total: f.total });
    let phi = 0;
    for (let i = 0; i < sc.bn.length; i++) if (sc.labels[i] === 1) phi += sc.bn[i] * g.rowAreaMm2[Math.floor(i / g.nx)] * 1e16;
    const expected = -(omega / (2 * Math.PI)) * phi * phi;
    expect(phi).toBeGreaterThan(0);
    expect(Math.abs(s.spin[0] - expected) / Math.abs(expected)).toBeLessThan(0.01);
    expect(s.spin[1]).toBe(0);
  }, 30000);
});
