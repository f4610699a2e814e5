// Colour scales for the boundary map. bn uses a purple-orange diverging scale: negative purple,
// zero near white, positive orange. It is the ColorBrewer PuOr scheme (Brewer 2003), which is
// rated safe for the common colour-vision deficiencies, avoids the red-green pair and is not the
// blue-red the usual magnetogram tools use. With the G_theta overlay on, bn turns grey and the
// density takes the diverging scale, so there is one coloured quantity at a time.

/** ColorBrewer PuOr, 11 classes, from the purple end to the orange end (negative to positive).
 *  Checked against Debian's matplotlib (its PuOr table) in test/web/colourScale.test.ts. */
export const PURPLE_ORANGE: readonly (readonly [number, number, number])[] = [
  [45, 0, 75], [84, 39, 136], [128, 115, 172], [178, 171, 210], [216, 218, 235], [247, 247, 247],
  [254, 224, 182], [253, 184, 99], [224, 130, 20], [179, 88, 6], [127, 59, 8],
];

/** Black to white, for bn under the G_theta overlay. */
export const GREYS: readonly (readonly [number, number, number])[] = [[20, 20, 20], [235, 235, 235]];

/** Colour for pixels with no data (NaN): a dark slate, far from every scale colour. */
export const NO_DATA_RGB: readonly [number, number, number] = [58, 64, 72];

/** A lookup table of n RGB triples (n*3 bytes) interpolated linearly between evenly spaced stops. */
export function buildLut(stops: readonly (readonly [number, number, number])[], n = 256): Uint8Array {
  if (stops.length < 2 || n < 2) throw new Error('buildLut needs at least two stops and two entries');
  const lut = new Uint8Array(n * 3);
  const segments = stops.length - 1;
  for (let i = 0; i < n; i++) {
    const pos = (i / (n - 1)) * segments;
    const k = Math.min(segments - 1, Math.floor(pos));
    const f = pos - k;
    for (let c = 0; c < 3; c++) lut[3 * i + c] = Math.round(stops[k][c] + (stops[k + 1][c] - stops[k][c]) * f);
  }
  return lut;
}

/**
 * A robust symmetric limit: the q-quantile of |v| over finite values, from at most maxSamples
 * evenly strided pixels (a 1024^2 map does not need every pixel for a colour range). Returns 1
 * when no finite non-zero value exists, so the scale is never degenerate.
 */
export function robustAbsLimit(data: ArrayLike<number>, q = 0.99, maxSamples = 65536): number {
  const stride = Math.max(1, Math.floor(data.length / maxSamples));
  const picked: number[] = [];
  for (let i = 0; i < data.length; i += stride) {
    const v = data[i];
    if (Number.isFinite(v) && v !== 0) picked.push(Math.abs(v));
  }
  if (picked.length === 0) return 1;
  picked.sort((a, b) => a - b);
  const k = Math.min(picked.length - 1, Math.max(0, Math.ceil(q * picked.length) - 1));
  return picked[k];
}

/** The smallest of 1, 2, 2.5, 5 times a power of ten that is >= v (v > 0): colour bar limits. */
export function niceCeil(v: number): number {
  if (!(v > 0) || !Number.isFinite(v)) return 1;
  const p = Math.pow(10, Math.floor(Math.log10(v)));
  for (const m of [1, 2, 2.5, 5, 10]) {
    // Relative slack so 2.0000000001 (rounding) does not jump to 2.5.
    if (m * p >= v * (1 - 1e-12)) return m * p;
  }
  return 10 * p;
}

/** Evenly spaced ticks from -limit to limit (count odd so 0 is one of them). */
export function symmetricTicks(limit: number, count = 5): number[] {
  const out: number[] = [];
  for (let i = 0; i < count; i++) out.push(-limit + (2 * limit * i) / (count - 1));
  return out;
}

/**
 * Fills RGBA pixels of a map (row-major, x fastest) through a LUT over [-limit, limit]. With flipY
 * the first data row lands at the bottom of the image (+y up, so counter-clockwise on the page is
 * counter-clockwise seen from the corona). NaN pixels get NO_DATA_RGB. alpha is the opacity of
 * every valid pixel; with alphaByValue it grows with |v|/limit instead (the overlay).
 */
export function rasterize(
  data: ArrayLike<number>,
  nx: number,
  ny: number,
  lut: Uint8Array,
  limit: number,
  out: Uint8ClampedArray,
  options: { flipY?: boolean; alphaByValue?: boolean; noDataAlpha?: number } = {},
): void {
  const n = lut.length / 3;
  const flipY = options.flipY ?? true;
  const byValue = options.alphaByValue ?? false;
  const noDataAlpha = options.noDataAlpha ?? 255;
  const scale = (n - 1) / (2 * limit);
  for (let iy = 0; iy < ny; iy++) {
    const row = flipY ? ny - 1 - iy : iy;
    let o = 4 * row * nx;
    let i = iy * nx;
    for (let ix = 0; ix < nx; ix++, i++, o += 4) {
      const v = data[i];
      if (v !== v) {
        out[o] = NO_DATA_RGB[0];
        out[o + 1] = NO_DATA_RGB[1];
        out[o + 2] = NO_DATA_RGB[2];
        out[o + 3] = noDataAlpha;
        continue;
      }
      let k = ((v + limit) * scale + 0.5) | 0;
      if (k < 0) k = 0;
      else if (k >= n) k = n - 1;
      out[o] = lut[3 * k];
      out[o + 1] = lut[3 * k + 1];
      out[o + 2] = lut[3 * k + 2];
      if (byValue) {
        const a = Math.abs(v) / limit;
        out[o + 3] = a >= 1 ? 255 : (a * 255) | 0;
      } else out[o + 3] = 255;
    }
  }
}
