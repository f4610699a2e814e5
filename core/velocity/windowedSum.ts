// Windowed sums over a separable window: out(x0, y0) = Sum_d Sum_e kx[d] ky[e] map(x0 + d, y0 + e),
// with d, e running over -r..r (a correlation, so a kernel weighted by d^a weighs the offset from
// the window centre, as the moments of the affine fits need). Two direct 1-D passes: rows, then
// columns with the inner loop along whole rows.
//
// NaN policy: a NaN value counts as zero, i.e. that pixel leaves every window it falls in; the
// caller decides what a window with missing pixels is worth (the fits below check conditioning).
// Outside the grid counts as zero too: windows are cut at the edges, never wrapped or mirrored.

/** Taps w(d) d^power for d = -r..r of a Gaussian window of width sigma (pixels), unnormalised. */
export function gaussianTaps(sigma: number, radius: number, power = 0): Float64Array {
  const taps = new Float64Array(2 * radius + 1);
  for (let d = -radius; d <= radius; d++) {
    taps[d + radius] = Math.exp(-(d * d) / (2 * sigma * sigma)) * d ** power;
  }
  return taps;
}

/** Radius (pixels) at which a Gaussian of width sigma is cut: 3 sigma, where it has fallen to 1.1%. */
export function windowRadius(sigma: number): number {
  return Math.max(1, Math.ceil(3 * sigma));
}

/** +1 when taps[r + d] = taps[r - d] for all d, -1 when taps[r + d] = -taps[r - d], else 0. */
export function tapSymmetry(taps: Float64Array): 1 | -1 | 0 {
  const r = (taps.length - 1) >> 1;
  let even = true, odd = taps[r] === 0;
  for (let d = 1; d <= r; d++) {
    if (taps[r + d] !== taps[r - d]) even = false;
    if (taps[r + d] !== -taps[r - d]) odd = false;
  }
  return even ? 1 : odd ? -1 : 0;
}

/** Row pass: out[y][x] = Sum_d taps[d + r] in[y][x + d], NaN and outside counted as zero. */
export function correlateRows(input: ArrayLike<number>, nx: number, ny: number, taps: Float64Array, out: Float64Array): void {
  const r = (taps.length - 1) >> 1;
  const sym = tapSymmetry(taps);
  for (let y = 0; y < ny; y++) {
    const row = y * nx;
    for (let x = 0; x < nx; x++) {
      if (sym !== 0 && x >= r && x < nx - r) {
        // Interior with symmetric taps: pair x + d with x - d (half the products).
        let s = 0;
        const c = input[row + x];
        if (c === c) s = taps[r] * c;
        for (let d = 1; d <= r; d++) {
          let p = input[row + x + d], m = input[row + x - d];
          if (p !== p) p = 0; // NaN counts as zero
          if (m !== m) m = 0;
          s += taps[r + d] * (p + sym * m);
        }
        out[row + x] = s;
        continue;
      }
      const lo = Math.max(-r, -x), hi = Math.min(r, nx - 1 - x);
      let s = 0;
      for (let d = lo; d <= hi; d++) {
        const v = input[row + x + d];
        if (v === v) s += taps[d + r] * v; // v === v is false only for NaN
      }
      out[row + x] = s;
    }
  }
}

/** Column pass: out[y][x] = Sum_e taps[e + r] in[y + e][x]; `input` must hold no NaN (row-pass output). */
export function correlateColumns(input: Float64Array, nx: number, ny: number, taps: Float64Array, out: Float64Array): void {
  const r = (taps.length - 1) >> 1;
  const sym = tapSymmetry(taps);
  for (let y = 0; y < ny; y++) {
    const o = y * nx;
    if (sym !== 0 && y >= r && y < ny - r) {
      // Interior rows with symmetric taps: add row y + e and sym times row y - e, once per e.
      const t0 = taps[r];
      for (let x = 0; x < nx; x++) out[o + x] = t0 * input[o + x];
      for (let e = 1; e <= r; e++) {
        const t = taps[r + e];
        const p = (y + e) * nx, m = (y - e) * nx;
        if (sym === 1) for (let x = 0; x < nx; x++) out[o + x] += t * (input[p + x] + input[m + x]);
        else for (let x = 0; x < nx; x++) out[o + x] += t * (input[p + x] - input[m + x]);
      }
      continue;
    }
    out.fill(0, o, o + nx);
    const lo = Math.max(-r, -y), hi = Math.min(r, ny - 1 - y);
    for (let e = lo; e <= hi; e++) {
      const t = taps[e + r];
      if (t === 0) continue;
      const src = (y + e) * nx;
      for (let x = 0; x < nx; x++) out[o + x] += t * input[src + x];
    }
  }
}

/**
 * The windowed sum of `map` with the separable window kx (along x) times ky (along y), into `out`
 * (a new array when not given). `scratch` (nx*ny) may be passed to avoid an allocation.
 */
export function windowedSum(
  map: ArrayLike<number>, nx: number, ny: number, kx: Float64Array, ky: Float64Array,
  out = new Float64Array(nx * ny), scratch = new Float64Array(nx * ny),
): Float64Array {
  correlateRows(map, nx, ny, kx, scratch);
  correlateColumns(scratch, nx, ny, ky, out);
  return out;
}

/**
 * correlateRows at the pixels where `at[i]` is non-zero only (the others are left as they are),
 * for an input that holds no NaN: the same sums in the same order as correlateRows.
 */
export function correlateFiniteRows(input: ArrayLike<number>, nx: number, ny: number, taps: Float64Array, out: Float64Array, at: Uint8Array): void {
  const r = (taps.length - 1) >> 1;
  const sym = tapSymmetry(taps);
  const t0 = taps[r];
  const lo = Math.min(r, nx), hi = Math.max(lo, nx - r);
  for (let y = 0; y < ny; y++) {
    const row = y * nx;
    for (let x = 0; x < nx; x++) {
      if (at[row + x] === 0) continue;
      if (sym !== 0 && x >= lo && x < hi) {
        let s = t0 * input[row + x];
        if (sym === 1) for (let d = 1; d <= r; d++) s += taps[r + d] * (input[row + x + d] + input[row + x - d]);
        else for (let d = 1; d <= r; d++) s += taps[r + d] * (input[row + x + d] - input[row + x - d]);
        out[row + x] = s;
        continue;
      }
      const dlo = Math.max(-r, -x), dhi = Math.min(r, nx - 1 - x);
      let s = 0;
      for (let d = dlo; d <= dhi; d++) s += taps[d + r] * input[row + x + d];
      out[row + x] = s;
    }
  }
}

/**
 * correlateColumns evaluated at the pixels `at` only (out[k] for pixel at[k]): the same sums in
 * the same order, for fits that need the windowed sums at a few centres.
 */
export function correlateColumnsAt(input: Float64Array, nx: number, ny: number, taps: Float64Array, at: Int32Array, out: Float64Array): void {
  const r = (taps.length - 1) >> 1;
  const sym = tapSymmetry(taps);
  const t0 = taps[r];
  for (let k = 0; k < at.length; k++) {
    const i = at[k];
    const x = i % nx, y = (i - x) / nx;
    if (sym !== 0 && y >= r && y < ny - r) {
      let s = t0 * input[i];
      if (sym === 1) for (let e = 1; e <= r; e++) s += taps[r + e] * (input[i + e * nx] + input[i - e * nx]);
      else for (let e = 1; e <= r; e++) s += taps[r + e] * (input[i + e * nx] - input[i - e * nx]);
      out[k] = s;
      continue;
    }
    const lo = Math.max(-r, -y), hi = Math.min(r, ny - 1 - y);
    let s = 0;
    for (let e = lo; e <= hi; e++) {
      const t = taps[e + r];
      if (t === 0) continue;
      s += t * input[(y + e) * nx + x];
    }
    out[k] = s;
  }
}

/**
 * correlateFiniteRows with two or three tap sets of one length at once (outs[k] from taps[k]),
 * for moments of one product that differ in their power of x: each input value is read once for
 * all of them, and each output is the same sum in the same order as correlateFiniteRows gives.
 */
export function correlateFiniteRowsFused(
  input: ArrayLike<number>, nx: number, ny: number, taps: readonly Float64Array[], outs: readonly Float64Array[], at: Uint8Array,
): void {
  const count = taps.length;
  if (count === 1) { correlateFiniteRows(input, nx, ny, taps[0], outs[0], at); return; }
  const r = (taps[0].length - 1) >> 1;
  const syms = taps.map(tapSymmetry);
  if (count > 3 || taps.some((t) => t.length !== taps[0].length) || syms.includes(0)) {
    for (let k = 0; k < count; k++) correlateFiniteRows(input, nx, ny, taps[k], outs[k], at);
    return;
  }
  const three = count === 3;
  const ta = taps[0], tb = taps[1], tc = three ? taps[2] : taps[1];
  const oa = outs[0], ob = outs[1], oc = three ? outs[2] : outs[1];
  const evenA = syms[0] === 1, evenB = syms[1] === 1, evenC = three ? syms[2] === 1 : evenB;
  const lo = Math.min(r, nx), hi = Math.max(lo, nx - r);
  for (let y = 0; y < ny; y++) {
    const row = y * nx;
    for (let x = 0; x < nx; x++) {
      const i = row + x;
      if (at[i] === 0) continue;
      if (x >= lo && x < hi) {
        const c = input[i];
        let sa = ta[r] * c, sb = tb[r] * c, sc = three ? tc[r] * c : 0;
        for (let d = 1; d <= r; d++) {
          const p = input[i + d], m = input[i - d];
          const even = p + m, odd = p - m;
          sa += ta[r + d] * (evenA ? even : odd);
          sb += tb[r + d] * (evenB ? even : odd);
          if (three) sc += tc[r + d] * (evenC ? even : odd);
        }
        oa[i] = sa; ob[i] = sb; if (three) oc[i] = sc;
        continue;
      }
      const dlo = Math.max(-r, -x), dhi = Math.min(r, nx - 1 - x);
      let sa = 0, sb = 0, sc = 0;
      for (let d = dlo; d <= dhi; d++) {
        const v = input[i + d];
        sa += ta[d + r] * v;
        sb += tb[d + r] * v;
        if (three) sc += tc[d + r] * v;
      }
      oa[i] = sa; ob[i] = sb; if (three) oc[i] = sc;
    }
  }
}

/**
 * correlateColumnsAt with two or three tap sets of one length at once (outs[k] from taps[k]), for
 * moments of one row-passed map that differ in their power of y: each value read once for all,
 * each output the same sum in the same order as correlateColumnsAt gives.
 */
export function correlateColumnsAtFused(
  input: Float64Array, nx: number, ny: number, taps: readonly Float64Array[], at: Int32Array, outs: readonly Float64Array[],
): void {
  const count = taps.length;
  if (count === 1) { correlateColumnsAt(input, nx, ny, taps[0], at, outs[0]); return; }
  const r = (taps[0].length - 1) >> 1;
  const syms = taps.map(tapSymmetry);
  if (count > 3 || taps.some((t) => t.length !== taps[0].length) || syms.includes(0)) {
    for (let k = 0; k < count; k++) correlateColumnsAt(input, nx, ny, taps[k], at, outs[k]);
    return;
  }
  const three = count === 3;
  const ta = taps[0], tb = taps[1], tc = three ? taps[2] : taps[1];
  const oa = outs[0], ob = outs[1], oc = three ? outs[2] : outs[1];
  const evenA = syms[0] === 1, evenB = syms[1] === 1, evenC = three ? syms[2] === 1 : evenB;
  for (let k = 0; k < at.length; k++) {
    const i = at[k];
    const x = i % nx, y = (i - x) / nx;
    if (y >= r && y < ny - r) {
      const c = input[i];
      let sa = ta[r] * c, sb = tb[r] * c, sc = three ? tc[r] * c : 0;
      for (let e = 1; e <= r; e++) {
        const p = input[i + e * nx], m = input[i - e * nx];
        const even = p + m, odd = p - m;
        sa += ta[r + e] * (evenA ? even : odd);
        sb += tb[r + e] * (evenB ? even : odd);
        if (three) sc += tc[r + e] * (evenC ? even : odd);
      }
      oa[k] = sa; ob[k] = sb; if (three) oc[k] = sc;
      continue;
    }
    // At the edges, zero taps are skipped as correlateColumnsAt skips them.
    const lo = Math.max(-r, -y), hi = Math.min(r, ny - 1 - y);
    let sa = 0, sb = 0, sc = 0;
    for (let e = lo; e <= hi; e++) {
      const v = input[(y + e) * nx + x];
      const a = ta[e + r], b = tb[e + r];
      if (a !== 0) sa += a * v;
      if (b !== 0) sb += b * v;
      if (three) { const c = tc[e + r]; if (c !== 0) sc += c * v; }
    }
    oa[k] = sa; ob[k] = sb; if (three) oc[k] = sc;
  }
}

/**
 * The part of correlateFiniteRowsFused that a kernel over interior pixels leaves: the pixels of
 * `at` within r of a row end (x < r or x >= nx - r), each sum as correlateFiniteRows forms it there.
 * Taps must be symmetric or antisymmetric (the interior is theirs).
 */
export function correlateFiniteRowsEdges(
  input: ArrayLike<number>, nx: number, ny: number, taps: readonly Float64Array[], outs: readonly Float64Array[], at: Uint8Array,
): void {
  const r = (taps[0].length - 1) >> 1;
  const lo = Math.min(r, nx), hi = Math.max(lo, nx - r);
  for (let y = 0; y < ny; y++) {
    const row = y * nx;
    for (let x = 0; x < nx; x++) {
      if (x === lo && hi > lo) x = hi;
      if (x >= nx) break;
      const i = row + x;
      if (at[i] === 0) continue;
      const dlo = Math.max(-r, -x), dhi = Math.min(r, nx - 1 - x);
      for (let s = 0; s < taps.length; s++) {
        const t = taps[s];
        let sum = 0;
        for (let d = dlo; d <= dhi; d++) sum += t[d + r] * input[i + d];
        outs[s][i] = sum;
      }
    }
  }
}

/**
 * The part of correlateColumnsAtFused that a kernel over interior centres leaves: the centres
 * within r of the top or bottom row, each sum as correlateColumnsAt forms it there (zero taps skipped).
 */
export function correlateColumnsAtEdges(
  input: Float64Array, nx: number, ny: number, taps: readonly Float64Array[], at: Int32Array, outs: readonly Float64Array[],
): void {
  const r = (taps[0].length - 1) >> 1;
  for (let k = 0; k < at.length; k++) {
    const i = at[k];
    const x = i % nx, y = (i - x) / nx;
    if (y >= r && y < ny - r) continue;
    const lo = Math.max(-r, -y), hi = Math.min(r, ny - 1 - y);
    for (let s = 0; s < taps.length; s++) {
      const t = taps[s];
      let sum = 0;
      for (let e = lo; e <= hi; e++) {
        const w = t[e + r];
        if (w === 0) continue;
        sum += w * input[(y + e) * nx + x];
      }
      outs[s][k] = sum;
    }
  }
}
