// Quantized floating-point tiles (FITS Standard 4.0, section 10.2): integers I become floats
// F = (I - R + 0.5) * ZSCALE + ZZERO with subtractive dithering (R from the standard's random
// sequence), or F = I * ZSCALE + ZZERO without. ZBLANK marks NaN; SUBTRACTIVE_DITHER_2 also
// reserves -2147483646 for exact zeros.

import { upperMedian } from '../quantile.js';

export type Quantization = 'NO_DITHER' | 'SUBTRACTIVE_DITHER_1' | 'SUBTRACTIVE_DITHER_2';

/** Reserved integer of SUBTRACTIVE_DITHER_2 for a pixel that was exactly 0.0. */
export const DITHER_ZERO_VALUE = -2147483646;
/** Integer that our quantizer writes for NaN (the value the convention's reference code uses). */
export const QUANTIZED_NULL_VALUE = -2147483647;
/** Length of the standard's random sequence. */
export const DITHER_RANDOM_COUNT = 10000;

/**
 * The standard's dither sequence (section 10.2.2): Park-Miller generator, a = 16807,
 * m = 2^31 - 1, seed 1; values stored as float32, r_i = seed_i / m. The standard notes that the
 * 10000th seed is 1043618065 (checked in the tests).
 */
export function ditherRandoms(): { values: Float32Array; lastSeed: number } {
  const a = 16807;
  const m = 2147483647;
  const values = new Float32Array(DITHER_RANDOM_COUNT);
  let seed = 1;
  for (let i = 0; i < DITHER_RANDOM_COUNT; i++) {
    const temp = a * seed;
    seed = temp - m * Math.trunc(temp / m);
    values[i] = seed / m;
  }
  return { values, lastSeed: seed };
}

// A constant lookup table (pure, computed once from the standard's formula).
const RANDOMS = ditherRandoms().values;

/** Index of the first random value of tile `tile` (1-based) with dither seed ZDITHER0. */
function firstRandom(tile: number, zdither0: number): { iseed: number; next: number } {
  const iseed = (tile - 1 + zdither0 - 1) % DITHER_RANDOM_COUNT;
  return { iseed, next: Math.floor(Math.fround(RANDOMS[iseed] * 500)) };
}

export interface QuantizedTile {
  readonly scale: number;
  readonly zero: number;
  readonly method: Quantization;
  /** 1-based tile number (row of the compressed table). */
  readonly tile: number;
  /** ZDITHER0, 1..10000. */
  readonly zdither0: number;
  /** Integer marking NaN, when the tile has one. */
  readonly blank?: number;
  /** Round results to float32 (ZBITPIX = -32). */
  readonly float32: boolean;
}

/** Restores floats from quantized integers into out[0..n). */
export function unquantize(ints: Int32Array, n: number, q: QuantizedTile, out: Float64Array): void {
  const { scale, zero, blank } = q;
  const hasBlank = blank !== undefined;
  const f = q.float32;
  if (q.method === 'NO_DITHER') {
    for (let i = 0; i < n; i++) {
      const v = ints[i];
      if (hasBlank && v === blank) out[i] = NaN;
      else out[i] = f ? Math.fround(v * scale + zero) : v * scale + zero;
    }
    return;
  }
  const dither2 = q.method === 'SUBTRACTIVE_DITHER_2';
  let { iseed, next } = firstRandom(q.tile, q.zdither0);
  for (let i = 0; i < n; i++) {
    const v = ints[i];
    if (hasBlank && v === blank) out[i] = NaN;
    else if (dither2 && v === DITHER_ZERO_VALUE) out[i] = 0;
    else {
      const x = (v - RANDOMS[next] + 0.5) * scale + zero;
      out[i] = f ? Math.fround(x) : x;
    }
    next++;
    if (next === DITHER_RANDOM_COUNT) {
      iseed++;
      if (iseed === DITHER_RANDOM_COUNT) iseed = 0;
      next = Math.floor(Math.fround(RANDOMS[iseed] * 500));
    }
  }
}

/** Rounds to nearest, halves away from zero (NINT of the reference code). */
function nint(x: number): number {
  return x >= 0 ? Math.trunc(x + 0.5) : Math.trunc(x - 0.5);
}

/**
 * Quantizes values with the given scale (step) and zero point; NaN becomes QUANTIZED_NULL_VALUE.
 * Returns undefined when a value does not fit the integer range at this scale.
 */
export function quantize(values: ArrayLike<number>, q: Omit<QuantizedTile, 'blank' | 'float32'>): Int32Array | undefined {
  const n = values.length;
  const out = new Int32Array(n);
  const { scale, zero } = q;
  const dither = q.method !== 'NO_DITHER';
  const dither2 = q.method === 'SUBTRACTIVE_DITHER_2';
  let { iseed, next } = firstRandom(q.tile, q.zdither0);
  const limit = 2147483600;
  for (let i = 0; i < n; i++) {
    const v = values[i];
    if (Number.isNaN(v)) out[i] = QUANTIZED_NULL_VALUE;
    else if (dither2 && v === 0) out[i] = DITHER_ZERO_VALUE;
    else {
      const x = dither ? nint((v - zero) / scale + RANDOMS[next] - 0.5) : nint((v - zero) / scale);
      if (!(Math.abs(x) <= limit)) return undefined;
      out[i] = x;
    }
    if (dither) {
      next++;
      if (next === DITHER_RANDOM_COUNT) {
        iseed++;
        if (iseed === DITHER_RANDOM_COUNT) iseed = 0;
        next = Math.floor(Math.fround(RANDOMS[iseed] * 500));
      }
    }
  }
  return out;
}

/**
 * Noise estimate of a tile for choosing the quantization step: the median over rows of the
 * median absolute second difference |2 x_i - x_{i-2} - x_{i+2}|, turned into the sigma of white
 * Gaussian noise (the median of |N(0, s)| is 0.6745 s, and the difference has s = sqrt(6) sigma).
 * Returns 0 when there are too few finite values.
 */
export function tileNoise(values: ArrayLike<number>, nx: number, ny: number): number {
  const rows = new Float64Array(ny);
  let nr = 0;
  const d = new Float64Array(Math.max(0, nx));
  for (let y = 0; y < ny; y++) {
    let k = 0;
    for (let x = 2; x + 2 < nx; x++) {
      const a = values[y * nx + x - 2], b = values[y * nx + x], c = values[y * nx + x + 2];
      if (Number.isFinite(a) && Number.isFinite(b) && Number.isFinite(c)) d[k++] = Math.abs(2 * b - a - c);
    }
    if (k >= 8) rows[nr++] = upperMedian(d.subarray(0, k));
  }
  if (nr === 0) return 0;
  return upperMedian(rows.subarray(0, nr)) / (0.6745 * Math.sqrt(6));
}
