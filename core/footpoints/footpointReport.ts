// A JSON-ready view of a footpoint analysis for the CLI and the server: the table, the events,
// both estimates, the top pairs and, when asked, the pair matrices as nested arrays with null for
// unknown values (JSON cannot hold NaN, and typed arrays do not serialise as arrays).

import type { FootpointAnalysis, FootpointFlag, FootpointRow, PairRow } from './analyseFootpoints.js';
import type { FootpointEvent } from './tracking.js';

export interface FootpointReport {
  readonly time: number;
  readonly dt: number | null;
  readonly count: number;
  readonly exact: FootpointAnalysis['exact'];
  readonly point: FootpointAnalysis['point'];
  readonly segmentation: FootpointAnalysis['segmentation'];
  readonly flags: FootpointFlag[];
  readonly events: FootpointEvent[];
  readonly pairs: PairRow[];
  readonly footpoints?: FootpointRow[];
  readonly pairMatrix?: {
    readonly ids: number[];
    readonly orbitExact: (number | null)[][] | null;
    readonly orbitPoint: (number | null)[][];
    readonly windingTurns: (number | null)[][];
  };
}

function rowsOf(m: Float64Array, k: number): (number | null)[][] {
  const out: (number | null)[][] = [];
  for (let i = 0; i < k; i++) {
    const row: (number | null)[] = [];
    for (let j = 0; j < k; j++) {
      const v = m[i * k + j];
      row.push(Number.isFinite(v) ? v : null);
    }
    out.push(row);
  }
  return out;
}

/** The analysis without its maps and state; `withTable` adds the footpoint rows and the pair matrices. */
export function footpointReport(a: FootpointAnalysis, withTable = false): FootpointReport {
  const base = {
    time: a.time, dt: a.dt, count: a.footpoints.length, exact: a.exact, point: a.point,
    segmentation: a.segmentation, flags: a.flags, events: a.events, pairs: a.pairs,
  };
  if (!withTable) return base;
  const k = a.pairMatrix.ids.length;
  return {
    ...base,
    footpoints: a.footpoints,
    pairMatrix: {
      ids: a.pairMatrix.ids,
      orbitExact: a.pairMatrix.orbitExact ? rowsOf(a.pairMatrix.orbitExact, k) : null,
      orbitPoint: rowsOf(a.pairMatrix.orbitPoint, k),
      windingTurns: rowsOf(a.pairMatrix.windingTurns, k),
    },
  };
}
