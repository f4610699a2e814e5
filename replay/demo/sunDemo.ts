// The whole-Sun demo as FITS frames: the invented bipoles of core/sphere/inventedSun.ts (our own
// scene, not solar data) on a Carrington plate carree map (CRLN-CAR/CRLT-CAR, degrees), carried by
// the differential-rotation profile in Carrington's frame, two of them twisting, with their
// velocity (VX toward increasing longitude, VY toward the north, km/s) and optional seeded noise
// on BN. What `helicord synth --demo sun` writes and `process` or the monitor take as a region.

import { writeFits } from '../../core/fits/writeImage.js';
import { InputError } from '../../core/inputError.js';
import { PHYSICAL_LIMITS } from '../../core/physicalLimits.js';
import { DEMO_BIPOLES, inventedSun } from '../../core/sphere/inventedSun.js';
import { SOLAR_RADIUS_MM } from '../../core/units.js';
import { addGaussianNoise, mixSeed } from './seededNoise.js';

export interface SunDemoOptions {
  /** Rows of the map (columns: twice as many); 180 gives 1-degree pixels. */
  readonly ny?: number;
  readonly frames?: number;
  /** Seconds between maps. */
  readonly cadenceS?: number;
  /** Noise added to BN, G (0: none). */
  readonly noiseG?: number;
  readonly seed?: number;
  /** UTC ms of the first map. */
  readonly startTime?: number;
}

/** Invented defaults: 1-degree pixels, 6-hourly maps over five days, no noise. */
export const SUN_DEMO_DEFAULTS = { ny: 180, frames: 21, cadenceS: 6 * 3600, noiseG: 0, seed: 1, startTime: Date.UTC(2026, 2, 1) } as const;

function checked(v: number, field: string, integer: boolean, min: number): number {
  if (!Number.isFinite(v) || v < min || (integer && !Number.isInteger(v))) throw new InputError('whole-Sun demo', field, `must be ${integer ? 'an integer' : 'a number'} of at least ${min}, got ${v}`);
  return v;
}

/**
 * Fewest rows whose pixels the frame readers take: a pixel's side on the equator, pi R / ny, within
 * the physical limits' largest pixel (core/physicalLimits.ts: 100 Mm, so 22 rows at R = 696 Mm).
 */
export const SUN_DEMO_MIN_ROWS = Math.ceil((Math.PI * SOLAR_RADIUS_MM) / PHYSICAL_LIMITS.pixelMm[1]);

/** The resolved options (defaults filled in, each checked). */
export function sunDemoSettings(o: SunDemoOptions = {}): Required<SunDemoOptions> {
  return {
    ny: checked(o.ny ?? SUN_DEMO_DEFAULTS.ny, 'ny', true, SUN_DEMO_MIN_ROWS),
    frames: checked(o.frames ?? SUN_DEMO_DEFAULTS.frames, 'frames', true, 1),
    cadenceS: checked(o.cadenceS ?? SUN_DEMO_DEFAULTS.cadenceS, 'cadenceS', false, Number.MIN_VALUE),
    noiseG: checked(o.noiseG ?? SUN_DEMO_DEFAULTS.noiseG, 'noiseG', false, 0),
    seed: checked(o.seed ?? SUN_DEMO_DEFAULTS.seed, 'seed', true, -Infinity),
    startTime: checked(o.startTime ?? SUN_DEMO_DEFAULTS.startTime, 'startTime', false, -Infinity),
  };
}

/** Map i of the demo as a FITS file: BN (G), VX, VY (km/s) images on CRLN-CAR/CRLT-CAR axes. */
export function sunDemoFits(i: number, options: SunDemoOptions = {}): Uint8Array {
  const o = sunDemoSettings(options);
  const map = inventedSun(DEMO_BIPOLES, i * o.cadenceS, o.startTime, { ny: o.ny });
  if (o.noiseG > 0) addGaussianNoise(map.bn, o.noiseG, mixSeed(o.seed, i));
  const k = map.keywords;
  const wcs = {
    ctype: [String(k.CTYPE1), String(k.CTYPE2)] as const, cunit: ['deg', 'deg'] as const,
    crpix: [Number(k.CRPIX1), Number(k.CRPIX2)] as const, crval: [Number(k.CRVAL1), Number(k.CRVAL2)] as const,
    cdelt: [Number(k.CDELT1), Number(k.CDELT2)] as const,
  };
  const keywords = [
    { key: 'DATE-OBS', value: String(k['DATE-OBS']) }, { key: 'TIMESYS', value: 'UTC' },
    { key: 'RSUN_REF', value: Number(k.RSUN_REF), float: true },
  ];
  return writeFits({
    primary: [
      { key: 'CREATOR', value: 'helicord synth' },
      { key: 'ORIGIN', value: 'helicord whole-Sun demo', comment: 'synthetic: invented bipoles' },
      { key: 'FRAMENO', value: i }, { key: 'SEED', value: o.seed }, { key: 'NOISE_G', value: o.noiseG, float: true },
    ],
    images: [
      { name: 'BN', nx: map.nx, ny: map.ny, values: Float32Array.from(map.bn), bunit: 'G', wcs, keywords },
      { name: 'VX', nx: map.nx, ny: map.ny, values: Float32Array.from(map.vx), bunit: 'km/s', wcs, keywords },
      { name: 'VY', nx: map.nx, ny: map.ny, values: Float32Array.from(map.vy), bunit: 'km/s', wcs, keywords },
    ],
  });
}
