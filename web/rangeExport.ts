// The series exports for a chosen time range, written in the page from the samples it holds, in
// the same CSV columns and JSON shape as the monitor's export routes (core/seriesColumns.ts).

import { SERIES_COLUMNS, seriesCsv, type SeriesRow } from '../core/seriesColumns.js';
import type { GapSpan, SeriesPoint } from './seriesMerge.js';

/** The held samples inside [from, to] ms. */
export function pointsInRange(series: readonly SeriesPoint[], from: number, to: number): SeriesPoint[] {
  return series.filter((p) => p.t >= from && p.t <= to);
}

/** CSV of the samples (the monitor's columns; null cells empty, as its export writes them). */
export function rangeCsv(points: readonly SeriesPoint[]): string {
  // The wire rows have the series row's fields; nulls are written as empty cells by seriesCsv.
  return seriesCsv(points.map((p) => p.s) as unknown as SeriesRow[]);
}

/** JSON of the samples and the gaps that touch the range, with the range itself. */
export function rangeJson(region: string, points: readonly SeriesPoint[], gaps: readonly GapSpan[], from: number, to: number): string {
  const iso = (ms: number): string => new Date(ms).toISOString();
  return JSON.stringify({
    region,
    range: { from: iso(from), to: iso(to) },
    columns: SERIES_COLUMNS,
    samples: points.map((p) => p.s),
    gaps: gaps.filter((g) => g.to >= from && g.from <= to).map((g) => ({ from: iso(g.from), to: iso(g.to), bridged: g.bridged })),
  });
}
