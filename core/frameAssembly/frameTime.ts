// Observation time of a frame from FITS keywords (FITS Standard 4.0, section 9): DATE-AVG (mean
// time of the exposure) or DATE-OBS in the ISO form yyyy-mm-ddThh:mm:ss[.s...], optionally a
// date-only DATE-OBS with TIME-OBS, in the time scale named by TIMESYS (default UTC, s.9.2.1).
// TAI, TT (= TAI + 32.184 s) and GPS (= TAI - 19 s) convert to UTC with the leap-second table.

import { InputError } from '../inputError.js';
import type { FitsHeader } from '../fits/header.js';
import { headerString } from '../fits/header.js';
import { LEAP_SECONDS, taiToUtcMs } from './leapSeconds.js';

export type TimeScale = 'UTC' | 'TAI' | 'TT' | 'GPS';

/** Seconds to add to a reading in this scale to get TAI. */
const TO_TAI: Record<Exclude<TimeScale, 'UTC'>, number> = { TAI: 0, TT: -32.184, GPS: 19 };

const ISO = /^(\d{4})-(\d{2})-(\d{2})(?:T(\d{2}):(\d{2})(?::(\d{2})(\.\d*)?)?)?Z?$/;

/** True when a leap second was inserted at the end of the UTC day starting at dayMs. */
function leapSecondEndsDay(dayMs: number): boolean {
  const next = dayMs + 86400000;
  return LEAP_SECONDS.some((e, i) => i > 0 && e.utcMs === next && e.taiMinusUtc === LEAP_SECONDS[i - 1].taiMinusUtc + 1);
}

/**
 * Parses an ISO-8601 FITS date-time as read on its own clock (ms since 1970, as if UTC).
 * Seconds = 60 is accepted for UTC at the end of a day that ended with a leap second, and read
 * as the first second of the next day (Unix time cannot hold it).
 */
export function parseFitsDateTime(text: string, scale: TimeScale, source: string, field: string): number {
  const m = ISO.exec(text.trim());
  if (!m) throw new InputError(source, field, `'${text}' is not a FITS date-time such as 2026-03-14T06:00:00.000`);
  const [y, mo, dd, hh = '0', mi = '0', ss = '0'] = m.slice(1, 7).map((v) => v ?? '0');
  const frac = m[7] && m[7].length > 1 ? Number(m[7]) : 0;
  const year = Number(y), month = Number(mo), day = Number(dd), hour = Number(hh), minute = Number(mi), sec = Number(ss);
  const dayMs = Date.UTC(year, month - 1, day);
  const check = new Date(dayMs);
  if (month < 1 || month > 12 || check.getUTCDate() !== day || check.getUTCMonth() !== month - 1) {
    throw new InputError(source, field, `'${text}' is not a valid calendar date`);
  }
  if (hour > 23 || minute > 59 || sec > 60) throw new InputError(source, field, `'${text}' has a time of day out of range`);
  if (sec === 60 && !(scale === 'UTC' && hour === 23 && minute === 59 && leapSecondEndsDay(dayMs))) {
    throw new InputError(source, field, `'${text}' has second 60, which exists only in UTC at the end of a leap-second day`);
  }
  return dayMs + ((hour * 60 + minute) * 60 + sec + frac) * 1000;
}

/** The time scale named by TIMESYS (absent = UTC, FITS 4.0 s.9.2.1). */
export function timeScale(headers: readonly FitsHeader[], source: string, where: string): TimeScale {
  for (const h of headers) {
    const v = headerString(h, 'TIMESYS', source, where);
    if (v === undefined) continue;
    const s = v.trim().toUpperCase();
    if (s === 'UTC' || s === 'UT') return 'UTC';
    if (s === 'TAI' || s === 'TT' || s === 'GPS') return s;
    if (s === 'TDT') return 'TT';
    throw new InputError(source, `${where} TIMESYS`, `'${v}' is not supported (UTC, TAI, TT or GPS)`);
  }
  return 'UTC';
}

/** A reading in `scale` (ms as if UTC) converted to UTC ms. */
export function toUtcMs(readingMs: number, scale: TimeScale, source: string, field: string): number {
  if (scale === 'UTC') return readingMs;
  const taiMs = readingMs + TO_TAI[scale] * 1000;
  const utc = taiToUtcMs(taiMs);
  if (utc === undefined) throw new InputError(source, field, `${scale} times before 1972 cannot be converted to UTC with the leap-second table`);
  return utc;
}

export interface FrameTime {
  readonly utcMs: number;
  /** Keyword the time came from. */
  readonly keyword: 'DATE-AVG' | 'DATE-OBS';
  readonly scale: TimeScale;
}

/**
 * The frame time from the first header (in order: the image's own, then e.g. the primary) that
 * has DATE-AVG or DATE-OBS. `prefer` picks which keyword wins when both exist (default DATE-AVG,
 * the mean time of the exposure, the better time for a rate).
 */
export function frameTimeFromHeaders(headers: readonly FitsHeader[], source: string, where: string, prefer: 'DATE-AVG' | 'DATE-OBS' = 'DATE-AVG'): FrameTime {
  const scale = timeScale(headers, source, where);
  const order: ('DATE-AVG' | 'DATE-OBS')[] = prefer === 'DATE-AVG' ? ['DATE-AVG', 'DATE-OBS'] : ['DATE-OBS', 'DATE-AVG'];
  for (const key of order) {
    for (const h of headers) {
      let text = headerString(h, key, source, where);
      if (text === undefined) continue;
      if (/^\d{4}-\d{2}-\d{2}$/.test(text.trim())) {
        const t = headerString(h, key === 'DATE-OBS' ? 'TIME-OBS' : 'TIME-AVG', source, where);
        if (t !== undefined) text = `${text.trim()}T${t.trim()}`;
      }
      const field = `${where} ${key}`;
      return { utcMs: toUtcMs(parseFitsDateTime(text, scale, source, field), scale, source, field), keyword: key, scale };
    }
  }
  throw new InputError(source, `${where} DATE-OBS`, 'is missing: a frame needs DATE-OBS or DATE-AVG for its time');
}

const pad = (n: number, width: number): string => String(n).padStart(width, '0');

/** The fields a formatUtc pattern may use, read on the UTC clock. */
const UTC_FIELDS: Record<string, (d: Date) => string> = {
  yyyy: (d) => pad(d.getUTCFullYear(), 4),
  MM: (d) => pad(d.getUTCMonth() + 1, 2),
  dd: (d) => pad(d.getUTCDate(), 2),
  HH: (d) => pad(d.getUTCHours(), 2),
  mm: (d) => pad(d.getUTCMinutes(), 2),
  ss: (d) => pad(d.getUTCSeconds(), 2),
  SSS: (d) => pad(d.getUTCMilliseconds(), 3),
};

const PATTERN_TOKEN = /yyyy|MM|dd|HH|mm|ss|SSS|'[^']*'|[A-Za-z]/g;

/**
 * Formats a UTC instant on the UTC clock, whatever the host's time zone.
 * Pattern fields: yyyy MM dd HH mm ss SSS; text in single quotes is copied ('T'); any other
 * letter is refused (so a pattern never silently prints something else); other characters are copied.
 * formatUtc(Date.UTC(2011, 2, 13, 7, 30, 0, 250)) === '2011-03-13T07:30:00.250'
 */
export function formatUtc(utcMs: number, pattern = "yyyy-MM-dd'T'HH:mm:ss.SSS"): string {
  if (!Number.isFinite(utcMs)) throw new InputError('time', 'value', `${utcMs} is not a time`);
  const d = new Date(utcMs);
  return pattern.replace(PATTERN_TOKEN, (token) => {
    if (token.startsWith("'")) return token.slice(1, -1);
    const field = UTC_FIELDS[token];
    if (!field) throw new InputError('time', 'pattern', `'${token}' in '${pattern}' is not a field (yyyy MM dd HH mm ss SSS)`);
    return field(d);
  });
}
