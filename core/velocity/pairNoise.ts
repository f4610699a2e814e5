// A robust noise level for a pair of frames when the region gives none: the median absolute
// deviation of the frame-to-frame difference, times 1.4826 (the MAD of a normal deviate) and
// divided by sqrt 2 (the difference of two independent noisy frames). Real evolution also enters
// the difference, so this is an upper bound where the field changes in most pixels.

import { median } from '../quantile.js';

/** Noise level in G of each frame, from the pixels valid in both; NaN when none. */
export function pairNoise(a: ArrayLike<number>, b: ArrayLike<number>): number {
  const diff: number[] = [];
  for (let i = 0; i < a.length; i++) {
    const d = b[i] - a[i];
    if (Number.isFinite(d)) diff.push(d);
  }
  if (diff.length === 0) return NaN;
  const med = median(diff);
  return (1.4826 * median(diff.map((d) => Math.abs(d - med)))) / Math.SQRT2;
}
