// Numbers as the page shows them: helicity and rates in scientific notation with their unit
// (3.2e42 Mx², 6.1e36 Mx²/s), fields in gauss, rotation in degrees per hour, times in UTC.
// Missing values (null, NaN) show as an em dash so a blank is never mistaken for zero.

export const NO_VALUE = '—';
const MINUS = '\u2212';

/** Scientific notation with `digits` significant digits: 3.2e42, −6.1e36, 0. */
export function formatSci(value: number | null | undefined, digits = 2): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NO_VALUE;
  if (value === 0) return '0';
  const a = Math.abs(value);
  // Counts and small plain numbers (3 frames, 0.5) read better without an exponent.
  const text = a >= 0.01 && a < 1e4 ? trimZeros(a.toPrecision(Math.max(digits, String(Math.round(a)).length))) : a.toExponential(Math.max(0, digits - 1)).replace('e+', 'e');
  return value < 0 ? MINUS + text : text;
}

function trimZeros(text: string): string {
  return text.includes('.') && !text.includes('e') ? text.replace(/\.?0+$/, '') : text;
}

/** Wire unit names to their printed form: Mx^2 -> Mx², Mx^2/s -> Mx²/s. */
export function prettyUnit(unit: string): string {
  return unit.replace(/\^2/g, '²').replace(/\^-1/g, '⁻¹').replace(/\^-2/g, '⁻²').replace(/\*\*2/g, '²');
}

/** A value with its unit; no unit printed for a missing value. */
export function withUnit(value: number | null | undefined, unit: string, digits = 2): string {
  const text = formatSci(value, digits);
  return text === NO_VALUE ? text : `${text} ${prettyUnit(unit)}`;
}

/** Accumulated helicity: 3.2e42 Mx². */
export function formatHelicity(value: number | null | undefined, digits = 2): string {
  return withUnit(value, 'Mx^2', digits);
}

/** Helicity injection rate: 6.1e36 Mx²/s. */
export function formatRate(value: number | null | undefined, digits = 2): string {
  return withUnit(value, 'Mx^2/s', digits);
}

/** Magnetic flux: 1.3e21 Mx. */
export function formatFlux(value: number | null | undefined, digits = 2): string {
  return withUnit(value, 'Mx', digits);
}

/** Field strength in gauss, plain digits below 10 kG: 1250 G, −35 G, 0.5 G. */
export function formatGauss(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NO_VALUE;
  const a = Math.abs(value);
  let text: string;
  if (a >= 1e4) text = formatSci(a, 3);
  else if (a >= 10 || a === 0) text = String(Math.round(a));
  else text = a.toPrecision(2).replace(/\.?0+$/, '');
  return `${value < 0 && text !== '0' ? MINUS : ''}${text} G`;
}

const DEG_PER_H_PER_RAD_PER_S = (180 / Math.PI) * 3600;

/** Rotation rate from rad/s to degrees per hour with its sense: +3.1°/h (counter-clockwise). */
export function formatOmega(radPerS: number | null | undefined): string {
  if (radPerS === null || radPerS === undefined || !Number.isFinite(radPerS)) return NO_VALUE;
  const d = radPerS * DEG_PER_H_PER_RAD_PER_S;
  const a = Math.abs(d);
  const text = a >= 100 ? a.toFixed(0) : a >= 10 ? a.toFixed(1) : a >= 0.01 ? a.toPrecision(2) : formatSci(a, 2);
  if (Number(text) === 0) return '0°/h';
  return `${d < 0 ? MINUS : '+'}${text}°/h`;
}

/** Degrees per hour of a rate in rad/s (for glyph sizes and sorting labels). */
export function omegaDegPerHour(radPerS: number): number {
  return radPerS * DEG_PER_H_PER_RAD_PER_S;
}

function two(n: number): string {
  return n < 10 ? `0${n}` : String(n);
}

/** UTC time as 2026-03-14 06:00:00 UTC (seconds dropped when `seconds` is false). */
export function formatUtc(ms: number | null | undefined, seconds = true): string {
  if (ms === null || ms === undefined || !Number.isFinite(ms)) return NO_VALUE;
  const d = new Date(ms);
  const date = `${d.getUTCFullYear()}-${two(d.getUTCMonth() + 1)}-${two(d.getUTCDate())}`;
  const time = `${two(d.getUTCHours())}:${two(d.getUTCMinutes())}${seconds ? ':' + two(d.getUTCSeconds()) : ''}`;
  return `${date} ${time} UTC`;
}

/** A duration in s as 45 s, 12 min, 1.5 h, 2.0 d. */
export function formatDuration(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return NO_VALUE;
  const a = Math.abs(seconds);
  if (a < 90) return `${Math.round(seconds)} s`;
  if (a < 5400) return `${Math.round(seconds / 60)} min`;
  if (a < 172800) return `${(seconds / 3600).toFixed(1)} h`;
  return `${(seconds / 86400).toFixed(1)} d`;
}

