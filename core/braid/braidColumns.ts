// The braid's figures for one row of the series (core/seriesColumns.ts names the columns) and a
// JSON-safe view of a whole report (times as ISO 8601 strings, NaN and infinities as null).

import type { BraidReportWire, BraidSpanWire } from '../wire/braidWire.js';
import type { BraidReport, BraidSpanReport } from './braidTracker.js';

export interface BraidColumns {
  /** Entropy of the sliding window's braid per hour (null until the window spans two frames). */
  readonly braid_entropy_rate: number | null;
  /** Entropy of the whole run per hour (segments joined by adding). */
  readonly braid_entropy_rate_run: number | null;
  /** Strands of the braid (the largest footpoints followed). */
  readonly braid_strands: number | null;
  /** Triples of the window braided while no pair of them crossed on balance (unseen by the pair budget). */
  readonly braid_flagged_triples: number | null;
}

const finite = (v: number | null | undefined): number | null => (v !== null && v !== undefined && Number.isFinite(v) ? v : null);

export function braidColumns(report: BraidReport | undefined): BraidColumns {
  return {
    braid_entropy_rate: finite(report?.window?.ratePerHour),
    braid_entropy_rate_run: finite(report?.run.ratePerHour),
    braid_strands: report ? report.strands.length : null,
    braid_flagged_triples: report?.window ? report.window.triples.filter((t) => t.flagged).length : null,
  };
}

const iso = (ms: number) => new Date(ms).toISOString();

function spanJson(s: BraidSpanReport): BraidSpanWire {
  return {
    start: iso(s.start), end: iso(s.end), hours: s.hours, frames: s.frames, axisDeg: s.axisDeg,
    entropy: s.entropy, ratePerHour: finite(s.ratePerHour), method: s.method, exact: s.exact,
    generators: s.generators, crossingHelicity: s.crossingHelicity, collisions: s.collisions,
    triples: s.triples.map((t) => ({
      ids: t.ids, entropy: t.entropy, trivial: t.trivial, pure: t.pure, flagged: t.flagged,
      pairCrossings: t.pairCrossings, windingTurns: t.windingTurns, milnor: t.milnor,
    })),
  };
}

/** The report as plain JSON (survives JSON.stringify / parse unchanged). */
export function braidReportJson(report: BraidReport): BraidReportWire {
  return {
    time: iso(report.time),
    strands: report.strands,
    segmentStarted: report.segmentStarted,
    segment: report.segment && spanJson(report.segment),
    window: report.window && {
      ...spanJson(report.window),
      word: report.window.word.map((g) => ({ position: g.position, sign: g.sign, time: iso(g.time), left: g.left, right: g.right, weight: g.weight })),
    },
    run: { ...report.run, ratePerHour: finite(report.run.ratePerHour) },
  };
}
