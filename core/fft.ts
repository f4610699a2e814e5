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

/**
 * In-place complex FFT of length plan.n down every column of a row-major block of `width`
 * columns (row r occupies [r*width, (r+1)*width)). Only rows < `nonZeroRows` may be non-zero on
 * input (the rest must be zero): the first stage then copies instead of adding.
 */
export function fftColumns(
  plan: FftPlan, re: Float64Array, im: Float64Array, width: number, sign: -1 | 1, nonZeroRows = plan.n,
): void {
  const { n, cos, sin, rev } = plan;
  for (let i = 0; i < n; i++) {
    const j = rev[i];
    if (j > i) {
      const a = i * width, b = j * width;
      for (let c = 0; c < width; c++) {
        let t = re[a + c]; re[a + c] = re[b + c]; re[b + c] = t;
        t = im[a + c]; im[a + c] = im[b + c]; im[b + c] = t;
      }
    }
  }
  for (let size = 2; size <= n; size <<= 1) {
    const half = size >> 1;
    const step = n / size;
    for (let start = 0; start < n; start += size) {
      for (let j = 0, k = 0; j < half; j++, k += step) {
        const wr = cos[k], wi = sign * sin[k];
        const p = (start + j) * width, q = (start + j + half) * width;
        if (size === 2 && nonZeroRows * 2 <= n) {
          // After bit reversal the partner row of a size-2 butterfly holds an input row >= n/2,
          // which is zero when at most half the rows carry data: a copy replaces the butterfly.
          re.copyWithin(q, p, p + width);
          im.copyWithin(q, p, p + width);
          continue;
        }
        if (k === 0) {
          for (let c = 0; c < width; c++) {
            const xr = re[q + c], xi = im[q + c], ur = re[p + c], ui = im[p + c];
            re[p + c] = ur + xr; im[p + c] = ui + xi;
            re[q + c] = ur - xr; im[q + c] = ui - xi;
          }
        } else {
          for (let c = 0; c < width; c++) {
            const xr = re[q + c], xi = im[q + c];
            const tr = wr * xr - wi * xi;
            const ti = wr * xi + wi * xr;
            const ur = re[p + c], ui = im[p + c];
            re[p + c] = ur + tr; im[p + c] = ui + ti;
            re[q + c] = ur - tr; im[q + c] = ui - ti;
          }
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
  zr.fill(0); zi.fill(0);
  const len = Math.min(count, plan.n);
  for (let i = 0; i < len; i++) {
    const v = x[inOffset + i];
    if ((i & 1) === 0) zr[i >> 1] = v; else zi[i >> 1] = v;
  }
  fftRow(plan.half, zr, zi, 0, -1);
  // X[k] = E[k] + W^k O[k], E = (Z[k] + conj Z[m-k]) / 2, O = (Z[k] - conj Z[m-k]) / 2i.
  for (let k = 0; k <= m; k++) {
    const a = k === m ? 0 : k;
    const b = k === 0 ? 0 : m - k;
    const zkr = zr[a], zki = zi[a], zmr = zr[b], zmi = -zi[b];
    const er = 0.5 * (zkr + zmr), ei = 0.5 * (zki + zmi);
    // (Z - conj Z') / 2i = (dr + i di) / 2i = (di - i dr) / 2
    const dr = zkr - zmr, di = zki - zmi;
    const or = 0.5 * di, oi = -0.5 * dr;
    const wr = cos[k], wi = -sin[k];
    outRe[outOffset + k] = er + wr * or - wi * oi;
    outIm[outOffset + k] = ei + wr * oi + wi * or;
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
  // E[k] = (X[k] + conj X[m-k]) / 2, O[k] = (X[k] - conj X[m-k]) / (2 W^k), Z = E + i O.
  for (let k = 0; k < m; k++) {
    const xr = re[inOffset + k], xi = im[inOffset + k];
    const yr = re[inOffset + m - k], yi = -im[inOffset + m - k];
    const er = 0.5 * (xr + yr), ei = 0.5 * (xi + yi);
    const dr = 0.5 * (xr - yr), di = 0.5 * (xi - yi);
    // divide by W^k = cos - i sin  ->  multiply by cos + i sin
    const wr = cos[k], wi = sin[k];
    const or = dr * wr - di * wi, oi = dr * wi + di * wr;
    zr[k] = er - oi;
    zi[k] = ei + or;
  }
  fftRow(plan.half, zr, zi, 0, 1);
  const s = scale / m;
  const len = Math.min(count, plan.n);
  for (let i = 0; i < len; i++) {
    out[outOffset + i] = ((i & 1) === 0 ? zr[i >> 1] : zi[i >> 1]) * s;
  }
}
