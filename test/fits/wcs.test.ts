// World coordinates kept from the input: our WCS reading and pixel-to-world against astropy's
// (Debian python3-astropy, wcslib inside; fixtures by test/fixtures/fits/make_cea_archive.py),
// mirrors, and the patch centre in Stonyhurst coordinates.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadFrameFileSet } from '../../replay/frameFiles.js';
import { diskAngle, frameWcs, helioprojectiveToStonyhurst, meanCentre, patchCentre, pixelToWorld } from '../../core/frameAssembly/wcs.js';
import type { KeywordRecord } from '../../core/frameAssembly/wcs.js';

const HERE = join(import.meta.dirname, '../fixtures/fits/cea');
const expected = JSON.parse(readFileSync(join(HERE, 'expected.json'), 'utf8')) as {
  files: Record<string, { pixels: [number, number][]; world: [number, number][] }>;
  cases: { name: string; header: KeywordRecord; nx: number; ny: number; pixels: [number, number][]; world: [number, number][] }[];
};
const archive = join(HERE, 'archive');
const files = readdirSync(archive).sort().map((n) => join(archive, n));

/** Longitudes compared the short way round. */
function expectSameLonLat(got: [number, number] | undefined, want: [number, number], tol: number): void {
  expect(got).toBeDefined();
  const dl = ((got![0] - want[0] + 540) % 360) - 180;
  expect(Math.abs(dl)).toBeLessThan(tol);
  expect(Math.abs(got![1] - want[1])).toBeLessThan(tol);
}

// wcslib works in double precision; our formulas differ in rounding only (1e-9 deg is 12 m on the Sun).
const TOL = 1e-9;

describe('pixel to world, against astropy', () => {
  it('the archive frames keep their CEA WCS and give astropy\'s coordinates at every pixel tried', async () => {
    const frames = await loadFrameFileSet(files, { layout: 'cea-components' });
    expect(frames).toHaveLength(4);
    for (const f of frames) {
      const name = f.provenance!.source!.split('/').pop()!;
      const want = expected.files[name];
      expect(want).toBeDefined();
      const w = frameWcs(f.provenance!.keywords!, f.nx, f.ny)!;
      expect(w.ctype).toEqual(['CRLN-CEA', 'CRLT-CEA']);
      want.pixels.forEach((p, i) => expectSameLonLat(pixelToWorld(w, p[0], p[1]), want.world[i], TOL));
    }
  });

  for (const c of expected.cases) {
    it(c.name, () => {
      const w = frameWcs(c.header, c.nx, c.ny)!;
      c.pixels.forEach((p, i) => {
        const got = pixelToWorld(w, p[0], p[1]);
        // Both give degrees (wcslib turns arcsec axes into degrees).
        const want = c.world[i];
        expectSameLonLat(got && [got[0] > 180 ? got[0] - 360 : got[0], got[1]], [want[0] > 180 ? want[0] - 360 : want[0], want[1]], TOL);
      });
    });
  }

  it('a mirrored frame\'s WCS gives at pixel n + 1 - p what the input gave at p', () => {
    const c = expected.cases[0];
    for (const mirror of [{ x: true }, { y: true }, { x: true, y: true }]) {
      const w = frameWcs(c.header, c.nx, c.ny, mirror)!;
      c.pixels.forEach((p, i) => {
        const q: [number, number] = [mirror.x ? c.nx + 1 - p[0] : p[0], 'y' in mirror && mirror.y ? c.ny + 1 - p[1] : p[1]];
        const got = pixelToWorld(w, q[0], q[1])!;
        expectSameLonLat([got[0] > 180 ? got[0] - 360 : got[0], got[1]], c.world[i] as [number, number], TOL);
      });
    }
    // Without a PC matrix, the mirror is a negative CDELT.
    const cea = frameWcs(expected.cases[2].header, 64, 48, { x: true })!;
    expect(cea.cdelt[0]).toBe(-0.04);
    expect(cea.crpix[0]).toBe(64 + 1 - 32.5);
  });

  it('an image without celestial axes has no spherical WCS', () => {
    expect(frameWcs({ CTYPE1: 'X', CTYPE2: 'Y', CDELT1: 0.36, CDELT2: 0.36 }, 10, 10)).toBeUndefined();
    expect(frameWcs({}, 10, 10)).toBeUndefined();
  });
});

/** Unit vector of a heliographic point, in a frame whose x points to longitude 0 on the equator. */
function unit(lon: number, lat: number): [number, number, number] {
  const r = Math.PI / 180;
  return [Math.cos(lat * r) * Math.cos(lon * r), Math.cos(lat * r) * Math.sin(lon * r), Math.sin(lat * r)];
}

describe('patch centre', () => {
  it('Carrington axes: Stonyhurst longitude = Carrington - (CRLN_OBS - HGLN_OBS); the angle from disk centre by vectors', async () => {
    const frames = await loadFrameFileSet(files, { layout: 'cea-components' });
    for (const f of frames) {
      const k = f.provenance!.keywords!;
      const c = patchCentre(k, f.nx, f.ny)!;
      // The centre pixel is the reference pixel here: astropy put it at CRVAL (expected.json).
      expect(c.lonDeg).toBeCloseTo(121.25 - (Number(k.CRLN_OBS) - Number(k.HGLN_OBS)), 9);
      expect(c.latDeg).toBeCloseTo(-18.5, 9);
      const p = unit(c.lonDeg, c.latDeg), o = unit(Number(k.HGLN_OBS), Number(k.HGLT_OBS));
      const angle = (Math.acos(p[0] * o[0] + p[1] * o[1] + p[2] * o[2]) * 180) / Math.PI;
      expect(c.diskAngleDeg).toBeCloseTo(angle, 9);
    }
  });

  it('helioprojective: the disk centre is the sub-observer point; a point on the surface comes back from its projection', () => {
    const dsun = 147_000, rsun = 696;
    const hp = { CTYPE1: 'HPLN-TAN', CTYPE2: 'HPLT-TAN', CUNIT1: 'arcsec', CUNIT2: 'arcsec', CRPIX1: 50.5, CRPIX2: 50.5, CRVAL1: 0, CRVAL2: 0, CDELT1: 0.5, CDELT2: 0.5, HGLT_OBS: 6.5, HGLN_OBS: 0, DSUN_OBS: dsun * 1e6, RSUN_REF: rsun * 1e6 };
    const c = patchCentre(hp, 100, 100)!;
    expect(c.lonDeg).toBeCloseTo(0, 9);
    expect(c.latDeg).toBeCloseTo(6.5, 9);
    expect(c.diskAngleDeg).toBeCloseTo(0, 6);
    // Forward (Thompson 2006, heliographic to heliocentric to helioprojective, written here on its own).
    const r = Math.PI / 180, b0 = 6.5, lon = 35, lat = -20;
    const x = rsun * Math.cos(lat * r) * Math.sin(lon * r);
    const y = rsun * (Math.sin(lat * r) * Math.cos(b0 * r) - Math.cos(lat * r) * Math.cos(lon * r) * Math.sin(b0 * r));
    const z = rsun * (Math.sin(lat * r) * Math.sin(b0 * r) + Math.cos(lat * r) * Math.cos(lon * r) * Math.cos(b0 * r));
    const d = Math.hypot(x, y, dsun - z);
    const tx = Math.atan2(x, dsun - z) / r, ty = Math.asin(y / d) / r;
    const back = helioprojectiveToStonyhurst(tx, ty, dsun, rsun, b0, 0)!;
    expect(back[0]).toBeCloseTo(lon, 9);
    expect(back[1]).toBeCloseTo(lat, 9);
    // Off the disk: no heliographic point.
    expect(helioprojectiveToStonyhurst(0.3, 0, dsun, rsun, b0, 0)).toBeUndefined();
    expect(diskAngle(lon, lat, 0, b0)).toBeGreaterThan(30);
  });

  it('a pair\'s centre is the mean of its frames\' centres, the short way round 180 degrees', () => {
    expect(meanCentre({ lonDeg: 179, latDeg: 10, diskAngleDeg: 80 }, { lonDeg: -179, latDeg: 12, diskAngleDeg: 82 })).toEqual({ lonDeg: 180, latDeg: 11, diskAngleDeg: 81 });
    expect(meanCentre({ lonDeg: 1, latDeg: 0 }, undefined)).toBeUndefined();
  });
});
