// The noise level of a bn map from the map itself: the median absolute deviation of the weak-field
// pixels, found by clipping strong fields away until the estimate settles. The MAD ignores the
// footpoints (they are far from the median) as long as most pixels are quiet, and clipping at a few
// sigma removes most of their weak tails too. The MAD of Gaussian noise clipped at +-k sigma is
// smaller than the unclipped one; that known factor is divided out. Large maps are sampled on a
// regular stride: 65536 pixels fix the MAD to about 0.5 %.

/** MAD to sigma for Gaussian noise: 1 / Phi^-1(3/4). */
export const MAD_TO_SIGMA = 1.482602218505602;

export interface NoiseLevel {
  /** Standard deviation of the noise, G (0 when most pixels are exactly equal, e.g. noise-free synthetic maps). */
  readonly sigma: number;
  /** Median of the weak-field pixels, G. */
  readonly median: number;
  /** Pixels the last estimate used. */
  readonly used: number;
}

export interface NoiseOptions {
  /** Pixels farther than this many sigma from the median are strong field and left out (default 2). */
  readonly clip?: number;
  /** Most pixels sampled (default 65536). */
  readonly maxSamples?: number;
}

/** The standard normal distribution function, from erf (Abramowitz & Stegun 7.1.26, |error| < 1.5e-7). */
export function normalCdf(x: number): number {
  const z = Math.abs(x) / Math.SQRT2;
  const t = 1 / (1 + 0.3275911 * z);
  const erf = 1 - t * (0.254829592 + t * (-0.284496736 + t * (1.421413741 + t * (-1.453152027 + t * 1.061405429)))) * Math.exp(-z * z);
  return x >= 0 ? 0.5 * (1 + erf) : 0.5 * (1 - erf);
}

/**
 * Median of |x| / sigma for Gaussian noise clipped to |x| < k sigma: the m with
 * P(|x| < m) = P(|x| < k) / 2, i.e. Phi(m) = 1/4 + Phi(k)/2 (bisection). 1/MAD_TO_SIGMA for k = Infinity.
 */
export function clippedMadOfUnitNormal(k: number): number {
  if (!Number.isFinite(k)) return 1 / MAD_TO_SIGMA;
  const target = 0.25 + 0.5 * normalCdf(k);
  let lo = 0, hi = k;
  for (let i = 0; i < 60; i++) {
    const mid = (lo + hi) / 2;
    if (normalCdf(mid) < target) lo = mid; else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * k-th smallest of a[0..n) (0-based), reordering a in place (Hoare's selection). The pivot index
 * comes from a fixed pseudo-random sequence: a middle pivot degrades badly on the V-shaped arrays
 * that |x - median| leaves after a first selection.
 */
export function selectKth(a: Float64Array, n: number, k: number): number {
  let lo = 0, hi = n - 1;
  let seed = 0x9e3779b9;
  while (lo < hi) {
    seed = (Math.imul(seed, 1103515245) + 12345) >>> 0;
    const pivot = a[lo + (seed % (hi - lo + 1))];
    let i = lo, j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i]; a[i] = a[j]; a[j] = t;
        i++; j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k];
  }
  return a[k];
}

/** Median of a[0..n) (the mean of the two middles for even n), reordering a in place; no NaN allowed. */
export function medianInPlace(a: Float64Array, n: number): number {
  if (n % 2 === 1) return selectKth(a, n, (n - 1) >> 1);
  const hi = selectKth(a, n, n >> 1);
  // After selection everything below index n/2 is <= hi: the lower middle is their maximum.
  let lo = -Infinity;
  for (let i = 0; i < n >> 1; i++) if (a[i] > lo) lo = a[i];
  return (lo + hi) / 2;
}

/** Index of the first of sorted[from..to) that is >= x (to when none). */
function firstAtLeast(sorted: Float64Array, from: number, to: number, x: number): number {
  while (from < to) {
    const mid = (from + to) >> 1;
    if (sorted[mid] < x) from = mid + 1; else to = mid;
  }
  return from;
}

/** Index of the first of sorted[from..to) that is > x (to when none). */
function firstAbove(sorted: Float64Array, from: number, to: number, x: number): number {
  while (from < to) {
    const mid = (from + to) >> 1;
    if (sorted[mid] <= x) from = mid + 1; else to = mid;
  }
  return from;
}

/** Median of sorted[from..to), as medianInPlace gives it (the mean of the two middles for an even count). */
function sortedMedian(sorted: Float64Array, from: number, to: number): number {
  const n = to - from;
  return n % 2 === 1 ? sorted[from + ((n - 1) >> 1)] : (sorted[from + (n >> 1) - 1] + sorted[from + (n >> 1)]) / 2;
}

/**
 * Median of |v - m| over sorted[from..to), with m inside their range. The deviations form two
 * ascending runs, walking outward from m to the left and to the right (|v - m| is monotone on each
 * side of m in floating point too), so each order statistic of the deviations is the k-th of the
 * union of two sorted runs: found by bisection on how many come from the left run, in O(log n),
 * the same value selection finds, without reordering anything.
 */
function sortedMedianDeviation(sorted: Float64Array, from: number, to: number, m: number): number {
  const n = to - from;
  const split = firstAtLeast(sorted, from, to, m);
  // The k-th smallest deviation (0-based) for an odd count, the mean of the (n/2-1)-th and the n/2-th otherwise.
  const k = n % 2 === 1 ? (n - 1) >> 1 : (n >> 1) - 1;
  const d = kthDeviation(sorted, from, split, to, m, k);
  return n % 2 === 1 ? d : (d + kthDeviation(sorted, from, split, to, m, k + 1)) / 2;
}

/**
 * The k-th smallest (0-based) of |sorted[i] - m| over from <= i < to, where the values below
 * `split` are < m and the rest >= m: left run L(j) = |sorted[split - 1 - j] - m|, right run
 * R(j) = |sorted[split + j] - m|, both ascending. The k + 1 smallest are the first i of L and the
 * first k + 1 - i of R for the least i with L(i) >= R(k - i) (or none of L left, or none of R).
 */
function kthDeviation(sorted: Float64Array, from: number, split: number, to: number, m: number, k: number): number {
  const nL = split - from, nR = to - split;
  const left = (j: number) => Math.abs(sorted[split - 1 - j] - m);
  const right = (j: number) => Math.abs(sorted[split + j] - m);
  let lo = Math.max(0, k + 1 - nR), hi = Math.min(k + 1, nL);
  while (lo < hi) {
    const i = (lo + hi) >> 1; // i < nL and k - i >= 0 here
    if (left(i) < right(k - i)) lo = i + 1; else hi = i;
  }
  const fromLeft = lo, fromRight = k + 1 - lo;
  const a = fromLeft > 0 ? left(fromLeft - 1) : -Infinity;
  const b = fromRight > 0 ? right(fromRight - 1) : -Infinity;
  return a >= b ? a : b;
}

/** How many of map's values are finite. */
function countFinite(map: ArrayLike<number>): number {
  let finite = 0;
  for (let i = 0; i < map.length; i++) if (Number.isFinite(map[i])) finite++;
  return finite;
}

/** Every stride-th finite value of map into out, in order; returns how many. */
function sampleFinite(map: ArrayLike<number>, stride: number, out: Float64Array): number {
  let count = 0;
  for (let i = 0, seen = 0; i < map.length; i++) {
    const v = map[i];
    if (!Number.isFinite(v)) continue;
    if (seen++ % stride === 0) out[count++] = v;
  }
  return count;
}

/** Robust noise level of the finite values of `map`; throws RangeError when none is finite. */
export function estimateNoiseLevel(map: ArrayLike<number>, options: NoiseOptions = {}): NoiseLevel {
  const clip = options.clip ?? 2;
  const maxSamples = options.maxSamples ?? 65536;
  // The loops are functions of their own: this one runs once per frame, and optimised inside a
  // loop it was thrown away at its result object every frame (V8).
  const finite = countFinite(map);
  if (finite === 0) throw new RangeError('no finite value to estimate the noise from');
  const stride = Math.max(1, Math.floor(finite / maxSamples));
  const sorted = new Float64Array(Math.ceil(finite / stride));
  const count = sampleFinite(map, stride, sorted);
  // Sorted once: every clipped set below is then a contiguous run of it, whose median and median
  // deviation are read off in linear time (the same order statistics as selecting them anew).
  sorted.subarray(0, count).sort();
  let lo = -Infinity, hi = Infinity;
  let med = 0, sigma = 0, used = 0;
  for (let iter = 0; iter < 12; iter++) {
    const from = firstAtLeast(sorted, 0, count, lo), to = firstAbove(sorted, from, count, hi);
    const n = to - from;
    if (n === 0) break;
    med = sortedMedian(sorted, from, to);
    // The first pass is unclipped; later ones are clipped at +-clip sigma.
    const next = sortedMedianDeviation(sorted, from, to, med) / (iter === 0 ? 1 / MAD_TO_SIGMA : clippedMadOfUnitNormal(clip));
    used = n;
    // Settled to 0.1 %: far below the sampling scatter of a MAD.
    const settled = iter > 0 && Math.abs(next - sigma) <= 1e-3 * next;
    sigma = next;
    if (settled || sigma === 0) break;
    lo = med - clip * sigma;
    hi = med + clip * sigma;
  }
  return { sigma, median: med, used };
}
