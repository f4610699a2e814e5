// What the braid takes of a frame's footpoints: each footpoint's id, centroid and flux, and the
// ids whose track broke (merged or split, so their centroid jumped). Reads the analysis itself
// (core/footpoints/analyseFootpoints.ts) or its stored report with the table
// (core/footpoints/footpointReport.ts; a report without its table gives no footpoints).

import type { FootpointEvent } from '../footpoints/tracking.js';
import type { BraidFrameInput } from './braidTracker.js';

export interface FootpointsOfFrame {
  /** UTC ms. */
  readonly time: number;
  readonly footpoints?: readonly { readonly id: number; readonly x: number; readonly y: number; readonly flux: number }[];
  readonly events: readonly FootpointEvent[];
}

export function braidInputFromFootpoints(fp: FootpointsOfFrame): BraidFrameInput {
  const broken = new Set<number>();
  for (const e of fp.events) {
    if (e.kind === 'merged') { broken.add(e.id); e.from.forEach((id) => broken.add(id)); }
    if (e.kind === 'split') { broken.add(e.id); e.into.forEach((id) => broken.add(id)); }
  }
  return { time: fp.time, footpoints: (fp.footpoints ?? []).map((r) => ({ id: r.id, x: r.x, y: r.y, flux: r.flux })), broken: [...broken] };
}
