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

/** Tick text: no trailing zeros, at most one decimal below 10. */
export function tickText(v: number): string {
  return Math.abs(v) >= 10 || Number.isInteger(v) ? String(Math.round(v)) : v.toFixed(1);
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
