// What the braid takes of a frame's footpoint analysis: each footpoint's id, centroid and flux,
// and the ids whose track broke (merged or split, so their centroid jumped).

import type { FootpointAnalysis } from '../footpoints/analyseFootpoints.js';
import type { BraidFrameInput } from './braidTracker.js';

export function braidInputFromFootpoints(fp: Pick<FootpointAnalysis, 'time' | 'footpoints' | 'events'>): BraidFrameInput {
  const broken = new Set<number>();
  for (const e of fp.events) {
    if (e.kind === 'merged') { broken.add(e.id); e.from.forEach((id) => broken.add(id)); }
    if (e.kind === 'split') { broken.add(e.id); e.into.forEach((id) => broken.add(id)); }
  }
  return { time: fp.time, footpoints: fp.footpoints.map((r) => ({ id: r.id, x: r.x, y: r.y, flux: r.flux })), broken: [...broken] };
}
