// The braid as the monitor's braid route, `process --json` and `rate` send it (docs/api.md,
// docs/braids.md): typed here once, built by core/braid/braidColumns.ts braidReportJson, read by
// the page. Times are ISO 8601 strings; non-finite numbers are null.
//
//   const answer: BraidRouteAnswer = { region, series, last: braidReportJson(report), segments };

import type { BraidColumns } from '../braid/braidColumns.js';
import type { TripleReport } from '../braid/braidSpan.js';

/** A triple of a braid span: its strands' ids, entropy, whether trivial, flagged, pair crossings and windings, Milnor's mu. */
export type BraidTripleWire = Pick<TripleReport, 'ids' | 'entropy' | 'trivial' | 'pure' | 'flagged' | 'pairCrossings' | 'windingTurns' | 'milnor'>;

/** A braid span (the current segment, or the sliding window). */
export interface BraidSpanWire {
  readonly start: string;
  readonly end: string;
  readonly hours: number;
  readonly frames: number;
  /** Projection axis, degrees counter-clockwise from +x. */
  readonly axisDeg: number;
  readonly entropy: number;
  /** Entropy per hour (null for a span of no duration). */
  readonly ratePerHour: number | null;
  readonly method: string;
  /** False when the entropy is a lower bound (more than 3 strands). */
  readonly exact: boolean;
  readonly generators: number;
  /** Sum of sign x flux product over the crossings, Mx^2. */
  readonly crossingHelicity: number;
  readonly collisions: number;
  readonly triples: readonly BraidTripleWire[];
}

export interface BraidGeneratorWire {
  readonly position: number;
  readonly sign: 1 | -1;
  readonly time: string;
  readonly left: number;
  readonly right: number;
  readonly weight: number;
}

/** The braid after one frame: strands, the segment, the window with its word, and the whole run. */
export interface BraidReportWire {
  readonly time: string;
  readonly strands: readonly number[];
  readonly segmentStarted: string | null;
  readonly segment: BraidSpanWire | null;
  readonly window: (BraidSpanWire & { readonly word: readonly BraidGeneratorWire[] }) | null;
  readonly run: { readonly segments: number; readonly entropy: number; readonly hours: number; readonly ratePerHour: number | null; readonly exact: boolean };
}

/** One frame's braid columns in the braid route's series. */
export type BraidRowWire = { readonly frame_id: number; readonly time: string } & BraidColumns;

/** GET /api/regions/:region/braid. Entropy rates per hour. */
export interface BraidRouteAnswer {
  readonly region: string;
  readonly series: readonly BraidRowWire[];
  readonly last: BraidReportWire | null;
  readonly segments: readonly { readonly time: string; readonly reason: string; readonly strands: readonly number[] }[];
}
