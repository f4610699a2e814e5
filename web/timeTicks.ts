// Time-axis ticks at round UTC times (every 5 min, 30 min, 3 h, ...), whatever the viewer's time
// zone, with labels in UTC: the time scale of chart.js would place them in local time.

const MIN = 60_000;
const HOUR = 60 * MIN;
const DAY = 24 * HOUR;
const STEPS = [MIN, 2 * MIN, 5 * MIN, 10 * MIN, 15 * MIN, 20 * MIN, 30 * MIN, HOUR, 2 * HOUR, 3 * HOUR, 4 * HOUR, 6 * HOUR, 12 * HOUR, DAY, 2 * DAY, 5 * DAY, 7 * DAY, 14 * DAY, 30 * DAY];

/** The smallest round step that puts at most maxTicks ticks on [min, max]. */
export function utcTickStep(min: number, max: number, maxTicks: number): number {
  const span = Math.max(0, max - min);
  for (const s of STEPS) if (span / s <= Math.max(1, maxTicks)) return s;
  return STEPS[STEPS.length - 1] * Math.ceil(span / (STEPS[STEPS.length - 1] * maxTicks));
}

/** Tick times: the multiples of the step (from 1970-01-01 00:00 UTC) inside [min, max]. */
export function utcTicks(min: number, max: number, maxTicks: number): number[] {
  if (!Number.isFinite(min) || !Number.isFinite(max) || max < min) return [];
  const step = utcTickStep(min, max, maxTicks);
  const out: number[] = [];
  for (let t = Math.ceil(min / step) * step; t <= max; t += step) out.push(t);
  return out;
}

function two(n: number): string {
  return n < 10 ? `0${n}` : String(n);
}

/** Label of a tick: HH:mm, or MM-DD at UTC midnight and for steps of a day or more. */
export function utcTickLabel(ms: number, stepMs: number): string {
  if (!Number.isFinite(ms)) return '';
  const d = new Date(ms);
  const date = `${two(d.getUTCMonth() + 1)}-${two(d.getUTCDate())}`;
  if (stepMs >= DAY || ms % DAY === 0) return date;
  return `${two(d.getUTCHours())}:${two(d.getUTCMinutes())}`;
}
