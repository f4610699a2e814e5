// Median and quantiles of a list of numbers: the one definition core, server, replay and the page use.
//
// NaN policy: NaN is "no data" (as in every map), so NaN entries are left out; +-Infinity are values
// and sort to the ends. A list with no value left (empty, or all NaN) gives NaN, never a throw:
// callers that need "unknown" test Number.isNaN on the answer. The input is never changed.
//
// Definitions (Hyndman & Fan 1996, "Sample quantiles in statistical packages", Am. Stat. 50, 361):
//   median      the mean of the two middle values for an even count (type 2/7 at q = 0.5);
//   upperMedian the value at sorted index floor(n/2): one of the values, the upper of the two
//               middles for an even count (a cadence or a timing, where a real step is wanted);
//   quantile    linear interpolation between order statistics, h = (n - 1) q (type 7, numpy's
//               and R's default).

function sortedValues(values: ArrayLike<number>): Float64Array {
  let n = 0;
  for (let i = 0; i < values.length; i++) if (!Number.isNaN(values[i])) n++;
  const s = new Float64Array(n);
  let k = 0;
  for (let i = 0; i < values.length; i++) if (!Number.isNaN(values[i])) s[k++] = values[i];
  return s.sort(); // typed-array sort is numeric
}

/**
 * Median of the values, NaN left out; NaN when none is left.
 * median([3, 1, 2]) === 2; median([4, 1, 3, 2]) === 2.5; median([]) is NaN
 */
export function median(values: ArrayLike<number>): number {
  const s = sortedValues(values);
  if (s.length === 0) return NaN;
  const m = s.length >> 1;
  return s.length % 2 === 1 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/**
 * The upper median: the value at sorted index floor(n/2), NaN left out; NaN when none is left.
 * upperMedian([4, 1, 3, 2]) === 3; upperMedian([3, 1, 2]) === 2
 */
export function upperMedian(values: ArrayLike<number>): number {
  const s = sortedValues(values);
  return s.length === 0 ? NaN : s[s.length >> 1];
}

/**
 * The q-quantile (0 <= q <= 1) by linear interpolation between order statistics (type 7), NaN
 * left out; NaN when none is left. Throws RangeError for q outside [0, 1].
 * quantile([1, 2, 3, 4, 5], 0.25) === 2; quantile([1, 2], 0.5) === 1.5; quantile([7], 0.9) === 7
 */
export function quantile(values: ArrayLike<number>, q: number): number {
  if (!(q >= 0 && q <= 1)) throw new RangeError(`quantile: q = ${q} is not in [0, 1]`);
  const s = sortedValues(values);
  if (s.length === 0) return NaN;
  const h = (s.length - 1) * q;
  const lo = Math.floor(h);
  if (lo === h || lo + 1 >= s.length) return s[lo];
  return s[lo] + (h - lo) * (s[lo + 1] - s[lo]);
}
