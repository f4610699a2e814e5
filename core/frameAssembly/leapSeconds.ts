// TAI - UTC since 1972: the published leap-second table of the IERS (International Earth Rotation
// and Reference Systems Service), Bulletin C, as distributed in leap-seconds.list
// (https://hpiers.obspm.fr/iers/bul/bulc/ntp/leap-seconds.list, the edition valid to 2026-06-28;
// the last leap second was inserted at the end of 2016). Each entry: the UTC instant (ms since 1970)
// from which TAI - UTC holds the given whole number of seconds. Before 1972 UTC used fractional
// steps and rate offsets, which this table does not describe.

export interface LeapSecondEntry {
  /** UTC start of the interval, ms since 1970-01-01T00:00:00Z. */
  readonly utcMs: number;
  /** TAI - UTC in seconds during the interval. */
  readonly taiMinusUtc: number;
}

const d = (iso: string): number => Date.parse(`${iso}T00:00:00Z`);

export const LEAP_SECONDS: readonly LeapSecondEntry[] = [
  { utcMs: d('1972-01-01'), taiMinusUtc: 10 },
  { utcMs: d('1972-07-01'), taiMinusUtc: 11 },
  { utcMs: d('1973-01-01'), taiMinusUtc: 12 },
  { utcMs: d('1974-01-01'), taiMinusUtc: 13 },
  { utcMs: d('1975-01-01'), taiMinusUtc: 14 },
  { utcMs: d('1976-01-01'), taiMinusUtc: 15 },
  { utcMs: d('1977-01-01'), taiMinusUtc: 16 },
  { utcMs: d('1978-01-01'), taiMinusUtc: 17 },
  { utcMs: d('1979-01-01'), taiMinusUtc: 18 },
  { utcMs: d('1980-01-01'), taiMinusUtc: 19 },
  { utcMs: d('1981-07-01'), taiMinusUtc: 20 },
  { utcMs: d('1982-07-01'), taiMinusUtc: 21 },
  { utcMs: d('1983-07-01'), taiMinusUtc: 22 },
  { utcMs: d('1985-07-01'), taiMinusUtc: 23 },
  { utcMs: d('1988-01-01'), taiMinusUtc: 24 },
  { utcMs: d('1990-01-01'), taiMinusUtc: 25 },
  { utcMs: d('1991-01-01'), taiMinusUtc: 26 },
  { utcMs: d('1992-07-01'), taiMinusUtc: 27 },
  { utcMs: d('1993-07-01'), taiMinusUtc: 28 },
  { utcMs: d('1994-07-01'), taiMinusUtc: 29 },
  { utcMs: d('1996-01-01'), taiMinusUtc: 30 },
  { utcMs: d('1997-07-01'), taiMinusUtc: 31 },
  { utcMs: d('1999-01-01'), taiMinusUtc: 32 },
  { utcMs: d('2006-01-01'), taiMinusUtc: 33 },
  { utcMs: d('2009-01-01'), taiMinusUtc: 34 },
  { utcMs: d('2012-07-01'), taiMinusUtc: 35 },
  { utcMs: d('2015-07-01'), taiMinusUtc: 36 },
  { utcMs: d('2017-01-01'), taiMinusUtc: 37 },
];

/** TAI - UTC (s) at a UTC instant; undefined before 1972. */
export function taiMinusUtcAt(utcMs: number, table: readonly LeapSecondEntry[] = LEAP_SECONDS): number | undefined {
  let found: number | undefined;
  for (const e of table) {
    if (utcMs >= e.utcMs) found = e.taiMinusUtc;
    else break;
  }
  return found;
}

/**
 * UTC ms from a TAI reading (the TAI calendar time read as if it were UTC, in ms). A time inside
 * an inserted leap second (UTC 23:59:60.x, which Unix time cannot hold) maps to 00:00:00.x of the
 * next day. Undefined before 1972.
 */
export function taiToUtcMs(taiMs: number, table: readonly LeapSecondEntry[] = LEAP_SECONDS): number | undefined {
  let found: number | undefined;
  for (const e of table) {
    if (taiMs - e.taiMinusUtc * 1000 >= e.utcMs) found = taiMs - e.taiMinusUtc * 1000;
    else break;
  }
  return found;
}
