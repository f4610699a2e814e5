// Sorting indices by a numeric key without a comparator callback: a stable bottom-up merge sort of
// typed arrays. Array.prototype.sort with `(a, b) => key[a] - key[b]` gives the same order (it is
// stable too) but calls back into JavaScript for every comparison, and a comparator made per call
// is compiled anew by V8 each time.
//
//   sortIndicesByKey(order, r2)   // order: 0..n-1 before, by ascending r2[order[.]] after

/**
 * Reorders `order` (indices into `key`) by ascending key, in place; equal keys keep their order.
 * Keys must not be NaN (as with the comparator, their place would be unspecified).
 */
export function sortIndicesByKey(order: Uint32Array, key: Float64Array): void {
  const n = order.length;
  const RUN = 16;
  // Runs of RUN sorted by insertion (stable: only strictly greater keys move right).
  for (let lo = 0; lo < n; lo += RUN) {
    const hi = Math.min(n, lo + RUN);
    for (let i = lo + 1; i < hi; i++) {
      const v = order[i], kv = key[v];
      let j = i - 1;
      while (j >= lo && key[order[j]] > kv) { order[j + 1] = order[j]; j--; }
      order[j + 1] = v;
    }
  }
  if (n <= RUN) return;
  let from: Uint32Array = order, to: Uint32Array = new Uint32Array(n);
  for (let width = RUN; width < n; width *= 2) {
    for (let lo = 0; lo < n; lo += 2 * width) {
      const mid = Math.min(n, lo + width), hi = Math.min(n, lo + 2 * width);
      let a = lo, b = mid, o = lo;
      // Stable: on equal keys the left run's index goes first.
      while (a < mid && b < hi) to[o++] = key[from[b]] < key[from[a]] ? from[b++] : from[a++];
      while (a < mid) to[o++] = from[a++];
      while (b < hi) to[o++] = from[b++];
    }
    const t = from; from = to; to = t;
  }
  if (from !== order) order.set(from);
}
