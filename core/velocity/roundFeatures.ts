// Finds flux concentrations that are nearly axisymmetric: a round footpoint spinning in place
// leaves the frames unchanged, so no tracking method can see its spin. Concentrations are the
// 4-connected groups of same-sign pixels with |Bn| above a threshold; each is compared with its own
// azimuthal average about its flux-weighted centroid (one-pixel radial bins).

export interface RoundFeature {
  /** Flux-weighted centroid, pixels. */
  readonly x: number;
  readonly y: number;
  /** Pixels in the concentration. */
  readonly pixels: number;
  /** Sum of |Bn| over it, G pixel (the caller multiplies by the pixel area). */
  readonly absSum: number;
  /** Sum |B - azimuthal mean| / Sum |B|: 0 for a perfectly round feature. */
  readonly asymmetry: number;
}

/**
 * Concentrations of at least `minPixels` pixels above `threshold` (G) whose asymmetry is at most
 * `maxAsymmetry`, largest first.
 */
export function roundFeatures(
  bn: ArrayLike<number>, nx: number, ny: number, threshold: number, maxAsymmetry = 0.1, minPixels = 12,
): RoundFeature[] {
  const n = nx * ny;
  const label = new Int32Array(n);
  const found: RoundFeature[] = [];
  const stack: number[] = [];
  let next = 0;
  for (let start = 0; start < n; start++) {
    const s0 = bn[start];
    if (label[start] !== 0 || !(Math.abs(s0) >= threshold)) continue;
    const sign = Math.sign(s0);
    next++;
    const visit = (m: number) => {
      if (label[m] !== 0) return;
      const v = bn[m];
      if (Math.abs(v) >= threshold && Math.sign(v) === sign) { label[m] = next; stack.push(m); }
    };
    const members: number[] = [];
    stack.push(start);
    label[start] = next;
    while (stack.length > 0) {
      const k = stack.pop()!;
      members.push(k);
      const x = k % nx, y = (k - x) / nx;
      // Neighbours left, right, below, above (no array per pixel: this runs for every strong pixel).
      if (x > 0) visit(k - 1);
      if (x < nx - 1) visit(k + 1);
      if (y > 0) visit(k - nx);
      if (y < ny - 1) visit(k + nx);
    }
    if (members.length < minPixels) continue;
    let sw = 0, sx = 0, sy = 0;
    for (const k of members) {
      const w = Math.abs(bn[k]), x = k % nx;
      sw += w; sx += w * x; sy += w * ((k - x) / nx);
    }
    const cx = sx / sw, cy = sy / sw;
    // Each member's radius once (Math.hypot is slow, and the bins need it twice more).
    const radii = new Float64Array(members.length);
    let reach = 0;
    for (let e = 0; e < members.length; e++) {
      const k = members[e], x = k % nx;
      radii[e] = Math.hypot(x - cx, (k - x) / nx - cy);
      reach = Math.max(reach, radii[e]);
    }
    const bins = Math.ceil(reach) + 1;
    const binSum = new Float64Array(bins), binCount = new Float64Array(bins);
    for (let e = 0; e < members.length; e++) { const r = Math.round(radii[e]); binSum[r] += Math.abs(bn[members[e]]); binCount[r]++; }
    let dev = 0;
    for (let e = 0; e < members.length; e++) { const r = Math.round(radii[e]); dev += Math.abs(Math.abs(bn[members[e]]) - binSum[r] / binCount[r]); }
    const asymmetry = dev / sw;
    if (asymmetry <= maxAsymmetry) found.push({ x: cx, y: cy, pixels: members.length, absSum: sw, asymmetry });
  }
  return found.sort((p, q) => q.absSum - p.absSum);
}
