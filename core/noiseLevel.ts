// A robust noise level of a magnetogram from the frame itself: 1.4826 times the median absolute
// deviation (the Gaussian-consistent MAD, common practice) of the weak-field pixels, found by
// iterating: pixels beyond `clip` sigma are strong field, not noise.

/** Median of the finite values (NaN when there are none). Sorts a copy. */
export function median(values: ArrayLike<number>): number {
  const a: number[] = [];
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) a.push(values[i]);
  if (a.length === 0) return NaN;
  const f = Float64Array.from(a).sort();
  const m = f.length >> 1;
  return f.length % 2 ? f[m] : 0.5 * (f[m - 1] + f[m]);
}

/** Noise sigma (same unit as the map) from weak-field pixels; NaN when the map has no data. */
export function noiseLevel(map: ArrayLike<number>, clip = 3, iterations = 5): number {
  let sigma = Infinity;
  let centre = 0;
  for (let it = 0; it < iterations; it++) {
    const weak: number[] = [];
    for (let i = 0; i < map.length; i++) {
      const v = map[i];
      if (Number.isFinite(v) && Math.abs(v - centre) <= clip * sigma) weak.push(v);
    }
    if (weak.length === 0) break;
    centre = median(weak);
    const dev = weak.map((v) => Math.abs(v - centre));
    const next = 1.4826 * median(dev);
    if (!(next > 0)) return next === 0 ? 0 : NaN;
    if (Math.abs(next - sigma) <= 1e-6 * next) { sigma = next; break; }
    sigma = next;
  }
  return Number.isFinite(sigma) ? sigma : NaN;
}
