// The spherical engine against an independent direct summation over every pixel pair with numpy
// (Debian's python3-numpy; astropy's WCS for pixel centres), through the committed fixture written
// by test/fixtures/sphere/make_direct_fixture.py: the pair sum, its density map, the label split
// and the differential-rotation share (Howard, Harvey & Forgach 1990, in Carrington's frame).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { CARRINGTON_SIDEREAL_MICRORAD_S, differentialRotationShare } from '../../core/sphere/differentialRotation.js';
import { pixelSpinRate } from '../../core/sphere/pixelSpin.js';
import { rateFromGradient, sphericalHelicityFlux } from '../../core/sphere/sphericalHelicityFlux.js';
import { sphericalGrid } from '../../core/sphere/sphericalGrid.js';
import { splitSphericalByLabels } from '../../core/sphere/sphericalSplit.js';
import { sphericalTransport } from '../../core/sphere/sphericalTransport.js';
import { directGradient, directTransposed } from './sphereDirectSum.js';
import { transposedSums } from '../../core/sphere/potentialGradient.js';

const fx = JSON.parse(readFileSync(new URL('../fixtures/sphere/direct.json', import.meta.url), 'utf8'));
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe(`spherical engine against numpy direct summation (${fx.generator})`, () => {
  for (const c of fx.cases) {
    it(c.name, () => {
      const g = sphericalGrid(c.header, c.nx, c.ny, 'reference');
      const t = sphericalTransport(g, c.bn, c.vx, c.vy, 'reference');
      const f = sphericalHelicityFlux(g, t);
      // Both sum the same pairs in double precision; they differ by rounding and by the pixel
      // areas (ours from the native rows, numpy's from its own formula): 1e-9 relative.
      expect(rel(f.pairs, c.pairs)).toBeLessThan(1e-9);
      const zero = new Float64Array(c.nx * c.ny);
      const per = { pairs: new Float64Array(c.nx * c.ny), self: new Float64Array(c.nx * c.ny) };
      rateFromGradient(g, t, f.gradient, t.ue, t.un, zero, per);
      const scale = Math.max(...c.pairs_density.map(Math.abs));
      let worst = 0;
      const areas = g.rowAreaMm2.map((a) => a * 1e16);
      for (let i = 0; i < per.pairs.length; i++) {
        worst = Math.max(worst, Math.abs(per.pairs[i] / areas[Math.floor(i / c.nx)] - c.pairs_density[i]) / scale);
      }
      expect(worst).toBeLessThan(1e-9);
      // Label split: the ordered footpoint sums give spin (plus own pixel spin) and orbit.
      const s = splitSphericalByLabels(g, t, Int32Array.from(c.labels));
      expect(s.ids).toEqual(c.ids);
      const k = c.ids.length;
      // Each footpoint's own pixel spin, summed here from the per-pixel terms of the whole.
      const all = { pairs: new Float64Array(c.nx * c.ny), self: new Float64Array(c.nx * c.ny) };
      rateFromGradient(g, t, f.gradient, t.ue, t.un, pixelSpinRate(g, t.ue, t.un, t.valid), all);
      for (let a = 0; a < k; a++) {
        let own = 0;
        c.labels.forEach((l: number, i: number) => { if (l === c.ids[a]) own += all.self[i]; });
        expect(rel(s.spin[a], c.ordered_sums[a][a] + own)).toBeLessThan(1e-9);
        expect(Math.abs(own)).toBeGreaterThan(0);
        for (let b = a + 1; b < k; b++) {
          expect(rel(s.orbit[a * k + b], c.ordered_sums[a][b] + c.ordered_sums[b][a])).toBeLessThan(1e-9);
        }
      }
      expect(Math.abs(s.spinTotal + s.orbitTotal + s.background - f.total)).toBeLessThan(1e-12 * Math.abs(f.total));
      expect(rel(s.total, f.total)).toBeLessThan(1e-12);
      // Differential rotation in Carrington's frame, pairs and pixels' own spin.
      const dr = differentialRotationShare(g, t, f.gradient, undefined, CARRINGTON_SIDEREAL_MICRORAD_S);
      expect(rel(dr.pairs, c.rotation_pairs)).toBeLessThan(1e-9);
      expect(rel(dr.selfPixel, c.rotation_self)).toBeLessThan(1e-9);
    });
  }

  it('the row-pair convolutions equal a direct sum in TypeScript too, on a whole Sun and an oblique patch with longitude decreasing by column', () => {
    const cases = [
      sphericalGrid({ CTYPE1: 'CRLN-CAR', CTYPE2: 'CRLT-CAR', CUNIT1: 'deg', CUNIT2: 'deg', CRPIX1: 18.5, CRPIX2: 9.5, CRVAL1: 180, CRVAL2: 0, CDELT1: 10, CDELT2: 10 }, 36, 18, 'a'),
      sphericalGrid({ CTYPE1: 'CRLN-CEA', CTYPE2: 'CRLT-CEA', CUNIT1: 'deg', CUNIT2: 'deg', CRPIX1: 10, CRPIX2: 8, CRVAL1: 100, CRVAL2: 20, CDELT1: -1, CDELT2: 0.8 }, 25, 20, 'b'),
    ];
    for (const g of cases) {
      const n = g.nx * g.ny;
      const b = new Float64Array(n).map((_, i) => Math.sin(i * 0.37) * 100 + 30 * Math.cos(i * 1.3));
      const t = sphericalTransport(g, b, new Float64Array(n), new Float64Array(n));
      const f = sphericalHelicityFlux(g, t);
      const d = directGradient(g, b);
      let worst = 0, scale = 0;
      for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(d.ge[i]), Math.abs(d.gn[i]));
      for (let i = 0; i < n; i++) worst = Math.max(worst, Math.abs(f.gradient.ge[i] - d.ge[i]), Math.abs(f.gradient.gn[i] - d.gn[i]));
      expect(worst / scale).toBeLessThan(1e-11);
      // The transposed sum (how the rate changes with B at the sources) the same way.
      const fe = new Float64Array(n).map((_, i) => Math.cos(i * 0.21) * 50), fnn = new Float64Array(n).map((_, i) => Math.sin(i * 0.53) * 40);
      const tr = transposedSums(g, fe, fnn), dt = directTransposed(g, fe, fnn);
      let worstT = 0, scaleT = 0;
      for (let i = 0; i < n; i++) scaleT = Math.max(scaleT, Math.abs(dt[i]));
      for (let i = 0; i < n; i++) worstT = Math.max(worstT, Math.abs(tr[i] - dt[i]));
      expect(worstT / scaleT).toBeLessThan(1e-11);
    }
  });
});
