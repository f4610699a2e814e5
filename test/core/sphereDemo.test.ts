// The invented whole Sun of the demo (core/sphere/inventedSun.ts) through the spherical sample and
// its series columns: a region of the whole Sun, budgets per hemisphere and the rotation share.
import { describe, expect, it } from 'vitest';
import { rotationMotion, HOWARD_1990_SIDEREAL, CARRINGTON_SIDEREAL_MICRORAD_S, differentialRotationShare } from '../../core/sphere/differentialRotation.js';
import { potentialGradients } from '../../core/sphere/potentialGradient.js';
import { sphericalTransport } from '../../core/sphere/sphericalTransport.js';
import { DEMO_BIPOLES, inventedSun } from '../../core/sphere/inventedSun.js';
import type { SphereMeasurement } from '../../core/sphere/measureSphere.js';
import { measureSphere } from '../../core/sphere/measureSphere.js';
import type { SphereColumns } from '../../core/sphere/sphereColumns.js';
import { accumulateSphere, emptySphereBudget } from '../../core/sphere/sphereColumns.js';
import { sphericalGrid } from '../../core/sphere/sphericalGrid.js';
import { isSphericalFrame, sphericalFrame } from '../../core/sphere/sphericalFrame.js';
import { frameFromMaps } from '../../core/frame.js';
import { writeFits } from '../../core/fits/writeImage.js';
import { frameFromFits } from '../../core/frameAssembly/assembleFrame.js';

describe('the invented whole Sun', () => {
  const start = Date.UTC(2026, 2, 1);

  it('reads as a whole-Sun Carrington map, flux-balanced, dated by its keywords', () => {
    const m = inventedSun(DEMO_BIPOLES, 3600, start, { ny: 60 });
    const g = sphericalGrid(m.keywords, m.nx, m.ny, 'demo');
    expect(g.wholeSun).toBe(true);
    expect(m.keywords['DATE-OBS']).toBe('2026-03-01T01:00:00.000');
    let flux = 0, unsigned = 0;
    for (let i = 0; i < m.bn.length; i++) { const a = g.rowAreaMm2[Math.floor(i / g.nx)]; flux += m.bn[i] * a; unsigned += Math.abs(m.bn[i]) * a; }
    expect(Math.abs(flux)).toBeLessThan(1e-12 * unsigned);
  });

  it('a day of 6-hourly maps: rotation share negative north and positive south, the twisting bipoles\' own motions by their sense of turning, budgets integrated per hemisphere', () => {
    let state = emptySphereBudget();
    const rows: SphereColumns[] = [];
    const ms: SphereMeasurement[] = [];
    for (let k = 0; k < 5; k++) {
      const map = inventedSun(DEMO_BIPOLES, k * 6 * 3600, start, { ny: 90 });
      const g = sphericalGrid(map.keywords, map.nx, map.ny, 'demo');
      const m = measureSphere(g, map);
      const step = accumulateSphere(state, start + k * 6 * 3600 * 1000, m);
      state = step.state;
      rows.push(step.columns);
      ms.push(m);
      if (k === 0) {
        // Own motions are the rate of the velocity less the profile's (to the pixel spin's finite differences).
        const rot = rotationMotion(g, HOWARD_1990_SIDEREAL, CARRINGTON_SIDEREAL_MICRORAD_S);
        const own = measureSphere(g, { bn: map.bn, vx: map.vx.map((v, i) => v - rot.vx[i]), vy: map.vy });
        // They differ by the profile's pixel spin taken by central differences (here) or analytically
        // (in the share): (h^2/6) times its third derivative over its first, a few h^2 of that spin.
        const t = sphericalTransport(g, map.bn, map.vx, map.vy);
        const share = differentialRotationShare(g, t, potentialGradients(g, [t.bn])[0]);
        const h = Math.PI / 90;
        expect(Math.abs(share.selfPixel)).toBeGreaterThan(0);
        expect(Math.abs(own.total - m.ownMotions)).toBeLessThan(3 * h * h * Math.abs(share.selfPixel));
      }
    }
    for (const m of ms) {
      expect(m.rotationNorth!).toBeLessThan(0);
      expect(m.rotationSouth!).toBeGreaterThan(0);
      // The northern twisting bipole turns counter-clockwise (negative), the southern clockwise.
      expect(m.north! - m.rotationNorth!).toBeLessThan(0);
      expect(m.south! - m.rotationSouth!).toBeGreaterThan(0);
    }
    const day = 24 * 3600;
    const trapezoid = (f: (m: SphereMeasurement) => number) => ms.slice(1).reduce((s, m, i) => s + ((f(ms[i]) + f(m)) / 2) * 6 * 3600, 0);
    expect(Math.abs(rows[4].budget_north! - trapezoid((m) => m.north!))).toBeLessThan(1e-12 * Math.abs(ms[0].north! * day));
    expect(Math.abs(rows[4].budget_rotation! - trapezoid((m) => m.rotation))).toBeLessThan(1e-12 * Math.abs(ms[0].rotation * day));
  }, 30000);
});

describe('a frame on the sphere', () => {
  it('is told from a flat one by its keywords and gives the grid and maps measureSphere takes', () => {
    const map = inventedSun(DEMO_BIPOLES, 0, Date.UTC(2026, 2, 1), { ny: 30 });
    const keywords = Object.fromEntries(Object.entries(map.keywords).filter(([, v]) => typeof v !== 'object')) as Record<string, string | number | boolean>;
    const frame = frameFromMaps({ time: 0, nx: map.nx, ny: map.ny, dx: 12, dy: 12 }, { bn: map.bn, vx: map.vx, vy: map.vy }, 'sun.fits', { provenance: { source: 'sun.fits', keywords } });
    expect(isSphericalFrame(frame)).toBe(true);
    const s = sphericalFrame(frame)!;
    expect(s.grid.wholeSun).toBe(true);
    expect(measureSphere(s.grid, s.maps).total).toBe(measureSphere(sphericalGrid(map.keywords, map.nx, map.ny, 'x'), map).total);
    const flat = frameFromMaps({ time: 0, nx: 4, ny: 4, dx: 1, dy: 1 }, { bn: new Float64Array(16).fill(1) }, 'flat.json');
    expect(isSphericalFrame(flat)).toBe(false);
    expect(sphericalFrame(flat)).toBeUndefined();
    const still = frameFromMaps({ time: 0, nx: map.nx, ny: map.ny, dx: 12, dy: 12 }, { bn: map.bn }, 'sun.fits', { provenance: { source: 'sun.fits', keywords } });
    expect(() => sphericalFrame(still)).toThrow(/sun.fits: vx\/vy/);
  });

  it('a whole-Sun FITS file (BN, VX, VY on CRLN-CAR/CRLT-CAR axes) read by the FITS reader is measured as the map it was written from (float32 rounding)', () => {
    const map = inventedSun(DEMO_BIPOLES, 0, Date.UTC(2026, 2, 1), { ny: 45 });
    const wcs = { ctype: ['CRLN-CAR', 'CRLT-CAR'] as [string, string], cunit: ['deg', 'deg'] as [string, string], crpix: [45.5, 23] as [number, number], crval: [180, 0] as [number, number], cdelt: [4, 4] as [number, number] };
    const keywords = [{ key: 'DATE-OBS', value: '2026-03-01T00:00:00.000' }, { key: 'RSUN_REF', value: 696e6 }];
    const bytes = writeFits({ images: [
      { name: 'BN', nx: map.nx, ny: map.ny, values: Float32Array.from(map.bn), bunit: 'G', wcs, keywords },
      { name: 'VX', nx: map.nx, ny: map.ny, values: Float32Array.from(map.vx), bunit: 'km/s', wcs },
      { name: 'VY', nx: map.nx, ny: map.ny, values: Float32Array.from(map.vy), bunit: 'km/s', wcs },
    ] });
    const frame = frameFromFits(bytes, 'sun.fits');
    const s = sphericalFrame(frame)!;
    expect(s.grid.wholeSun).toBe(true);
    const fromFile = measureSphere(s.grid, s.maps, { noiseG: 1 });
    const direct = measureSphere(sphericalGrid(map.keywords, map.nx, map.ny, 'x'), map, { noiseG: 1 });
    // float32 keeps 7 digits of each value; the rates are sums of products of them.
    expect(Math.abs(fromFile.total - direct.total)).toBeLessThan(1e-5 * Math.abs(direct.total));
    expect(Math.abs(fromFile.rotation - direct.rotation)).toBeLessThan(1e-5 * Math.abs(direct.rotation));
  });
});
