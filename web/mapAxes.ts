// The boundary map's axes and scale bar in Mm: round tick values (1, 2 or 5 x 10^k Mm) over the
// map's extent, and a scale bar of a round length near a wanted width in pixels.

/** A round step (1, 2, 5 x 10^k) giving at most maxTicks ticks over span. */
export function niceStep(span: number, maxTicks: number): number {
  if (!(span > 0) || !(maxTicks >= 1)) return 1;
  const raw = span / maxTicks;
  const p = 10 ** Math.floor(Math.log10(raw));
  for (const m of [1, 2, 5, 10]) if (m * p >= raw) return m * p;
  return 10 * p;
}

/** Multiples of a round step inside [min, max]. */
export function axisTicks(min: number, max: number, maxTicks: number): number[] {
  const step = niceStep(max - min, maxTicks);
  const out: number[] = [];
  for (let v = Math.ceil(min / step - 1e-9) * step; v <= max + 1e-9 * step; v += step) out.push(Math.abs(v) < 1e-9 * step ? 0 : v);
  return out;
}

/**
 * Tick text: no trailing zeros, at most one decimal below 10, a minus sign for negatives; with the
 * ticks' step, as many decimals as the step needs (0.5 -> 1, 0.05 -> 2), so neighbours never read alike.
 */
export function tickText(v: number, step?: number): string {
  const decimals = step !== undefined && step > 0 && step < 1 ? Math.min(4, Math.ceil(-Math.log10(step) - 1e-9)) : undefined;
  const text = decimals !== undefined
    ? v.toFixed(decimals)
    : Math.abs(v) >= 10 || Number.isInteger(v) ? String(Math.round(v)) : v.toFixed(1);
  return text.replace('-', '\u2212'); // a true minus sign, as everywhere on the page
}

/** The step between round tick values (the smallest gap; longitudes across 360 wrap). */
export function tickStep(values: readonly number[]): number | undefined {
  let step: number | undefined;
  for (let i = 1; i < values.length; i++) {
    let d = Math.abs(values[i] - values[i - 1]);
    if (d > 180) d = 360 - d;
    if (d > 0 && (step === undefined || d < step)) step = d;
  }
  return step;
}

/** A scale bar: the round length (1, 2, 5 x 10^k Mm) whose bar is at most maxPx long. */
export function scaleBar(pxPerMm: number, maxPx: number): { mm: number; px: number } {
  if (!(pxPerMm > 0)) return { mm: 0, px: 0 };
  const maxMm = maxPx / pxPerMm;
  const p = 10 ** Math.floor(Math.log10(maxMm));
  let mm = p;
  for (const m of [1, 2, 5]) if (m * p <= maxMm) mm = m * p;
  return { mm, px: mm * pxPerMm };
}

/**
 * Round ticks along a map edge from the world values at its pixels (`values[i]` at pixel i, in
 * degrees, NaN where the projection gives none): each tick's fractional pixel position where the
 * values cross it, by linear interpolation. Longitudes are unwrapped first (359.9 -> 360.1, not 0.1)
 * and labelled back in 0..360.
 */
export function edgeTicks(values: readonly number[], maxTicks: number, longitude = false): { pos: number; value: number }[] {
  const v = values.slice();
  if (longitude) {
    for (let i = 1; i < v.length; i++) {
      if (!Number.isFinite(v[i]) || !Number.isFinite(v[i - 1])) continue;
      while (v[i] - v[i - 1] > 180) v[i] -= 360;
      while (v[i] - v[i - 1] < -180) v[i] += 360;
    }
  }
  const finite = v.filter((x) => Number.isFinite(x));
  if (finite.length < 2) return [];
  const ticks = axisTicks(Math.min(...finite), Math.max(...finite), maxTicks);
  const out: { pos: number; value: number }[] = [];
  for (const t of ticks) {
    for (let i = 1; i < v.length; i++) {
      const a = v[i - 1];
      const b = v[i];
      if (!Number.isFinite(a) || !Number.isFinite(b) || a === b) continue;
      if ((t - a) * (t - b) <= 0) {
        const value = longitude ? ((t % 360) + 360) % 360 : t;
        out.push({ pos: i - 1 + (t - a) / (b - a), value: Math.abs(value) < 1e-9 ? 0 : value });
        break;
      }
    }
  }
  return out;
}
