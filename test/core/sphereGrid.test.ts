// Pixel coordinates and areas of heliographic CAR/CEA maps on the sphere against astropy's WCS
// (Debian's python3-astropy, wcslib), through the committed fixture written by
// test/fixtures/sphere/make_grid_fixture.py.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { nativeVelocity, sphericalGrid } from '../../core/sphere/sphericalGrid.js';
import { InputError } from '../../core/inputError.js';

const fx = JSON.parse(readFileSync(new URL('../fixtures/sphere/grids.json', import.meta.url), 'utf8'));

describe('spherical grids against astropy', () => {
  for (const c of fx.cases) {
    it(c.name, () => {
      const g = sphericalGrid(c.header, c.nx, c.ny, 'case.fits');
      const r2 = g.radiusMm ** 2;
      let worstLon = 0, worstLat = 0, worstArea = 0, worstTurn = 0;
      c.pixels.forEach(([px, py]: [number, number], m: number) => {
        const i = (py - 1) * c.nx + (px - 1);
        let dl = g.lonDeg[i] - c.lon[m];
        dl -= 360 * Math.round(dl / 360);
        worstLon = Math.max(worstLon, Math.abs(dl));
        worstLat = Math.max(worstLat, Math.abs(g.latDeg[i] - c.lat[m]));
        worstArea = Math.max(worstArea, Math.abs(g.rowAreaMm2[py - 1] / r2 - c.area_sr[m]) / c.area_sr[m]);
        worstTurn = Math.max(worstTurn, Math.abs((g.nativeTurn?.[i] ?? 0) - c.turn_rad[m]));
      });
      // Coordinates to 1e-9 degree (double rounding of the two implementations).
      expect(worstLon).toBeLessThan(1e-9);
      expect(worstLat).toBeLessThan(1e-9);
      // Areas: exact for rows on parallels; great-circle sides for oblique pixels differ by
      // (pixel size)^2 relative, 1e-5 for half-degree pixels.
      expect(worstArea).toBeLessThan(c.name.includes('oblique') ? 1e-5 : 1e-10);
      // The turn from both sides by central differences over 2e-3 pixel: 1e-7 rad.
      expect(worstTurn).toBeLessThan(1e-7);
      expect(g.nativeTurn !== undefined).toBe(c.name.includes('oblique'));
    });
  }

  it('a whole-Sun map covers the sphere once: areas sum to 4 pi R^2 (CAR and CEA)', () => {
    for (const c of fx.cases.slice(0, 2)) {
      const g = sphericalGrid(c.header, c.nx, c.ny, 'sun.fits');
      expect(g.wholeSun).toBe(true);
      const sum = g.rowAreaMm2.reduce((s, a) => s + a, 0) * g.nx;
      expect(Math.abs(sum / (4 * Math.PI * g.radiusMm ** 2) - 1)).toBeLessThan(1e-12);
    }
  });

  it('velocities turn with an oblique grid: the speed is kept and north becomes the row direction', () => {
    const c = fx.cases[2];
    const g = sphericalGrid(c.header, c.nx, c.ny, 'patch.fits');
    const n = c.nx * c.ny;
    const { ue, un } = nativeVelocity(g, new Float64Array(n), new Float64Array(n).fill(1));
    const i = 5 * c.nx + 3;
    expect(Math.hypot(ue[i], un[i])).toBeCloseTo(1, 12);
    expect(un[i]).toBeCloseTo(Math.cos(g.nativeTurn![i]), 12);
  });

  it('refuses what it cannot read, naming the keyword', () => {
    const base = fx.cases[0].header;
    const bad = (h: object, field: string) => {
      try { sphericalGrid({ ...base, ...h }, 360, 180, 'bad.fits'); } catch (e) {
        expect(e).toBeInstanceOf(InputError);
        expect((e as InputError).field).toBe(field);
        expect((e as Error).message).toContain('bad.fits');
        return;
      }
      throw new Error('accepted');
    };
    bad({ CTYPE1: 'HPLN-TAN' }, 'CTYPE1');
    bad({ CTYPE2: 'CRLT-CEA' }, 'CTYPE2');
    bad({ CDELT1: 1.5 }, 'CDELT1');
    bad({ CRPIX2: 80 }, 'CRPIX2/CDELT2');
    bad({ PC1_1: 1, PC1_2: 0.1, PC2_1: 0, PC2_2: 1 }, 'PC/CD');
    bad({ CUNIT1: 'arcsec' }, 'CUNIT1');
  });
});
