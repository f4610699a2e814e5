// Radix-2 fast Fourier transforms on split real/imaginary Float64Arrays, written for the 2-D
// convolutions of the helicity flux: a complex transform of one contiguous row, the same
// transform applied down the columns of a row-major block (butterflies run along whole rows, so
// the inner loop is contiguous), and a real-input transform of length 2m through one complex
// transform of length m. Forward uses exp(-2 pi i k n / N); inverse is unscaled (callers scale).

export interface FftPlan {
  /** Transform length (a power of two). */
  readonly n: number;
  /** cos(2 pi k / n), sin(2 pi k / n) for k < n/2. */
  readonly cos: Float64Array;
  readonly sin: Float64Array;
  /** Bit-reversal permutation of 0..n-1. */
  readonly rev: Uint32Array;
}

/** True for 1, 2, 4, 8, ... */
export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n >= 1 && (n & (n - 1)) === 0;
}

/** Smallest power of two >= n. */
export function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

export function createFftPlan(n: number): FftPlan {
  if (!isPowerOfTwo(n)) throw new RangeError(`FFT length must be a power of two, got ${n}`);
  const half = Math.max(1, n >> 1);
  const cos = new Float64Array(half);
  const sin = new Float64Array(half);
  for (let k = 0; k < half; k++) {
    cos[k] = Math.cos((2 * Math.PI * k) / n);
    sin[k] = Math.sin((2 * Math.PI * k) / n);
  }
  const rev = new Uint32Array(n);
  let bits = 0;
  while (1 << bits < n) bits++;
  for (let i = 0; i < n; i++) {
    let r = 0;
    for (let b = 0; b < bits; b++) r |= ((i >> b) & 1) << (bits - 1 - b);
    rev[i] = r;
  }
  return { n, cos, sin, rev };
}

/** In-place complex FFT of re/im[offset .. offset+n). `sign` -1 forward, +1 inverse (unscaled). */
export function fftRow(plan: FftPlan, re: Float64Array, im: Float64Array, offset: number, sign: -1 | 1): void {
  const { n, cos, sin, rev } = plan;
  if (n < 2) return;
  for (let i = 0; i < n; i++) {
    const j = rev[i];
    if (j > i) {
      const a = offset + i, b = offset + j;
      let t = re[a]; re[a] = re[b]; re[b] = t;
      t = im[a]; im[a] = im[b]; im[b] = t;
    }
  }
  // First stage (size 2) has unit twiddles.
  for (let i = offset, end = offset + n; i < end; i += 2) {
    const ar = re[i], ai = im[i], br = re[i + 1], bi = im[i + 1];
    re[i] = ar + br; im[i] = ai + bi;
    re[i + 1] = ar - br; im[i + 1] = ai - bi;
  }
  for (let size = 4; size <= n; size <<= 1) {
    const half = size >> 1;
    const step = n / size;
    for (let start = offset, end = offset + n; start < end; start += size) {
      for (let j = 0, k = 0; j < half; j++, k += step) {
        const wr = cos[k], wi = sign * sin[k];
        const p = start + j, q = p + half;
        const xr = re[q], xi = im[q];
        const tr = wr * xr - wi * xi;
        const ti = wr * xi + wi * xr;
        const ur = re[p], ui = im[p];
        re[p] = ur + tr; im[p] = ui + ti;
        re[q] = ur - tr; im[q] = ui - ti;
      }
    }
  }
}

/** Columns handled together by fftColumns: n rows of this many columns stay in cache. */
const COLUMN_BLOCK = 32;

/**
 * In-place complex FFT of length plan.n down every column of a row-major block of `width`
 * columns (row r occupies [r*width, (r+1)*width)). Only rows < `nonZeroRows` may be non-zero on
 * input (the rest must be zero): when that is at most half, the first stage copies instead of
 * adding. Columns are done in blocks so that all stages of a block run in cache.
 */
export function fftColumns(
  plan: FftPlan, re: Float64Array, im: Float64Array, width: number, sign: -1 | 1, nonZeroRows = plan.n,
): void {
  for (let c0 = 0; c0 < width; c0 += COLUMN_BLOCK) {
    fftColumnBlock(plan, re, im, width, c0, Math.min(width, c0 + COLUMN_BLOCK), sign, nonZeroRows * 2 <= plan.n);
  }
}

function fftColumnBlock(
  plan: FftPlan, re: Float64Array, im: Float64Array, width: number, c0: number, c1: number,
  sign: -1 | 1, upperHalfZero: boolean,
): void {
  const { n, cos, sin, rev } = plan;
  for (let i = 0; i < n; i++) {
    const j = rev[i];
    if (j > i) {
      const a = i * width, b = j * width;
      for (let c = c0; c < c1; c++) {
        let t = re[a + c]; re[a + c] = re[b + c]; re[b + c] = t;
        t = im[a + c]; im[a + c] = im[b + c]; im[b + c] = t;
      }
    }
  }
  if (n < 2) return;
  // Size 2: unit twiddles. After bit reversal the partner row holds an input row >= n/2, which
  // is zero when the upper half is: a copy replaces the butterfly.
  for (let start = 0; start < n; start += 2) {
    const p = start * width, q = p + width;
    if (upperHalfZero) {
      for (let c = c0; c < c1; c++) { re[q + c] = re[p + c]; im[q + c] = im[p + c]; }
    } else {
      for (let c = c0; c < c1; c++) {
        const xr = re[q + c], xi = im[q + c], ur = re[p + c], ui = im[p + c];
        re[p + c] = ur + xr; im[p + c] = ui + xi;
        re[q + c] = ur - xr; im[q + c] = ui - xi;
      }
    }
  }
  let size = 4;
  // An odd count of remaining stages: one radix-2 stage, then pairs of stages.
  let stages = 0;
  for (let s = 4; s <= n; s <<= 1) stages++;
  if (stages % 2 === 1) {
    const half = 2, step = n / 4;
    for (let start = 0; start < n; start += 4) {
      for (let j = 0; j < half; j++) {
        const wr = cos[j * step], wi = sign * sin[j * step];
        const p = (start + j) * width, q = (start + j + half) * width;
        for (let c = c0; c < c1; c++) {
          const xr = re[q + c], xi = im[q + c];
          const tr = wr * xr - wi * xi, ti = wr * xi + wi * xr;
          const ur = re[p + c], ui = im[p + c];
          re[p + c] = ur + tr; im[p + c] = ui + ti;
          re[q + c] = ur - tr; im[q + c] = ui - ti;
        }
      }
    }
    size = 8;
  }
  // Two radix-2 stages (sizes s and 2s) per pass over the rows: four rows a, b = a + s/2,
  // c = a + s, d = c + s/2 go through both stages in registers, halving memory traffic.
  for (; size * 2 <= n; size <<= 2) {
    const h = size >> 1;
    const s1 = n / size, s2 = n / (2 * size);
    for (let g = 0; g < n; g += 2 * size) {
      for (let j = 0; j < h; j++) {
        const w1r = cos[j * s1], w1i = sign * sin[j * s1];
        const w2r = cos[j * s2], w2i = sign * sin[j * s2];
        const w3r = cos[(j + h) * s2], w3i = sign * sin[(j + h) * s2];
        const a = (g + j) * width, b = a + h * width, cc = a + size * width, d = cc + h * width;
        for (let c = c0; c < c1; c++) {
          const ar = re[a + c], ai = im[a + c];
          const br = re[b + c], bi = im[b + c];
          const cr = re[cc + c], ci = im[cc + c];
          const dr = re[d + c], di = im[d + c];
          // stage of size s on (a, b) and (c, d)
          const t1r = w1r * br - w1i * bi, t1i = w1r * bi + w1i * br;
          const t2r = w1r * dr - w1i * di, t2i = w1r * di + w1i * dr;
          const a1r = ar + t1r, a1i = ai + t1i, b1r = ar - t1r, b1i = ai - t1i;
          const c1r = cr + t2r, c1i = ci + t2i, d1r = cr - t2r, d1i = ci - t2i;
          // stage of size 2s on (a, c) and (b, d)
          const u1r = w2r * c1r - w2i * c1i, u1i = w2r * c1i + w2i * c1r;
          const u2r = w3r * d1r - w3i * d1i, u2i = w3r * d1i + w3i * d1r;
          re[a + c] = a1r + u1r; im[a + c] = a1i + u1i;
          re[cc + c] = a1r - u1r; im[cc + c] = a1i - u1i;
          re[b + c] = b1r + u2r; im[b + c] = b1i + u2i;
          re[d + c] = b1r - u2r; im[d + c] = b1i - u2i;
        }
      }
    }
  }
}

export interface RealFftPlan {
  /** Real transform length N = 2m. */
  readonly n: number;
  readonly half: FftPlan;
  /** cos, sin of 2 pi k / N for k <= N/2. */
  readonly cos: Float64Array;
  readonly sin: Float64Array;
  /** Scratch row of length m. */
  readonly zr: Float64Array;
  readonly zi: Float64Array;
}

export function createRealFftPlan(n: number): RealFftPlan {
  if (!isPowerOfTwo(n) || n < 2) throw new RangeError(`real FFT length must be a power of two >= 2, got ${n}`);
  const m = n >> 1;
  const cos = new Float64Array(m + 1);
  const sin = new Float64Array(m + 1);
  for (let k = 0; k <= m; k++) {
    cos[k] = Math.cos((2 * Math.PI * k) / n);
    sin[k] = Math.sin((2 * Math.PI * k) / n);
  }
  return { n, half: createFftPlan(m), cos, sin, zr: new Float64Array(m), zi: new Float64Array(m) };
}

/**
 * Forward real FFT of x[inOffset .. inOffset+count) zero-extended to length N, into the
 * half spectrum outRe/outIm[outOffset .. outOffset+N/2] (N/2+1 values).
 */
export function realFftRow(
  plan: RealFftPlan, x: ArrayLike<number>, inOffset: number, count: number,
  outRe: Float64Array, outIm: Float64Array, outOffset: number,
): void {
  const m = plan.n >> 1;
  const { zr, zi, cos, sin } = plan;
  const len = Math.min(count, plan.n);
  const pairs = len >> 1;
  for (let i = 0, o = inOffset; i < pairs; i++, o += 2) { zr[i] = x[o]; zi[i] = x[o + 1]; }
  let next = pairs;
  if (len & 1) { zr[pairs] = x[inOffset + len - 1]; zi[pairs] = 0; next++; }
  if (next < m) { zr.fill(0, next); zi.fill(0, next); }
  fftRow(plan.half, zr, zi, 0, -1);
  // X[k] = E[k] + W^k O[k] with E = (Z[k] + conj Z[m-k]) / 2, O = (Z[k] - conj Z[m-k]) / 2i,
  // W = exp(-2 pi i / N); and X[m-k] = conj(E[k] - W^k O[k]): one pass serves k and m-k.
  outRe[outOffset] = zr[0] + zi[0]; outIm[outOffset] = 0;
  outRe[outOffset + m] = zr[0] - zi[0]; outIm[outOffset + m] = 0;
  for (let k = 1, h = m >> 1; k <= h; k++) {
    const b = m - k;
    const zkr = zr[k], zki = zi[k], zbr = zr[b], zbi = zi[b];
    const er = 0.5 * (zkr + zbr), ei = 0.5 * (zki - zbi);
    const or = 0.5 * (zki + zbi), oi = -0.5 * (zkr - zbr);
    const c = cos[k], sn = sin[k];
    const tr = c * or + sn * oi, ti = c * oi - sn * or;
    outRe[outOffset + k] = er + tr; outIm[outOffset + k] = ei + ti;
    outRe[outOffset + b] = er - tr; outIm[outOffset + b] = ti - ei;
  }
}

/**
 * Inverse real FFT of the half spectrum re/im[inOffset .. inOffset+N/2]; writes the first
 * `count` samples, times `scale`, to out[outOffset..]. With scale 1 a forward transform followed
 * by this one returns the input (the 1/N is included).
 */
export function realInverseFftRow(
  plan: RealFftPlan, re: Float64Array, im: Float64Array, inOffset: number,
  out: Float64Array, outOffset: number, count: number, scale = 1,
): void {
  const m = plan.n >> 1;
  const { zr, zi, cos, sin } = plan;
  // Z[k] = E[k] + i O[k] with E = (X[k] + conj X[m-k]) / 2, O = (X[k] - conj X[m-k]) / (2 W^k);
  // and Z[m-k] = conj(E[k]) + i conj(O[k]): one pass serves k and m-k.
  {
    const xr = re[inOffset], xi = im[inOffset], yr = re[inOffset + m], yi = -im[inOffset + m];
    const er = 0.5 * (xr + yr), ei = 0.5 * (xi + yi), or = 0.5 * (xr - yr), oi = 0.5 * (xi - yi);
    zr[0] = er - oi; zi[0] = ei + or;
  }
  for (let k = 1, h = m >> 1; k <= h; k++) {
    const b = m - k;
    const xr = re[inOffset + k], xi = im[inOffset + k];
    const yr = re[inOffset + b], yi = -im[inOffset + b];
    const er = 0.5 * (xr + yr), ei = 0.5 * (xi + yi);
    const dr = 0.5 * (xr - yr), di = 0.5 * (xi - yi);
    // divide by W^k = cos - i sin: multiply by cos + i sin
    const c = cos[k], sn = sin[k];
    const or = dr * c - di * sn, oi = dr * sn + di * c;
    zr[k] = er - oi; zi[k] = ei + or;
    // conj(E) + i conj(O) = (er + oi) + i (or - ei)
    zr[b] = er + oi; zi[b] = or - ei;
  }
  fftRow(plan.half, zr, zi, 0, 1);
  const s = scale / m;
  const len = Math.min(count, plan.n);
  const pairs = len >> 1;
  for (let i = 0, o = outOffset; i < pairs; i++, o += 2) { out[o] = zr[i] * s; out[o + 1] = zi[i] * s; }
  if (len & 1) out[outOffset + len - 1] = zr[pairs] * s;
}
