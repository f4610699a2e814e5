// A robust noise level for a pair of frames when the region gives none: the median absolute
// deviation of the frame-to-frame difference, times 1.4826 (the MAD of a normal deviate) and
// divided by sqrt 2 (the difference of two independent noisy frames). Real evolution also enters
// the difference, so this is an upper bound where the field changes in most pixels.

import { medianInPlace } from '../noiseLevel.js';

/** Noise level in G of each frame, from the pixels valid in both; NaN when none. */
export function pairNoise(a: ArrayLike<number>, b: ArrayLike<number>): number {
  // The medians by selection (the same order statistics as a sort, in linear time).
  const diff = new Float64Array(a.length);
  let n = 0;
  for (let i = 0; i < a.length; i++) {
    const d = b[i] - a[i];
    if (Number.isFinite(d)) diff[n++] = d;
  }
  if (n === 0) return NaN;
  const med = medianInPlace(diff, n);
  for (let i = 0; i < n; i++) diff[i] = Math.abs(diff[i] - med);
  return (1.4826 * medianInPlace(diff, n)) / Math.SQRT2;
}
