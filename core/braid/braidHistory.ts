// The braid fold over a region's frames, kept with what was folded so it can be extended as frames
// arrive: each frame's braid report under its key (a frame index in the batch, a frame id in the
// monitor), the last report, and where segments began. Frames must come in time order; one not
// after the last folded is passed over (the braid needs time to advance). Pure: a new history
// comes out, the one given is left as it was.
//
//   let h = emptyBraidHistory<number>();
//   h = extendBraidHistory(h, [{ key: 7, footpoints: analysis }], { strands: 3 }); // h.reports.get(7), h.last

import type { FootpointsOfFrame } from './braidInput.js';
import { braidInputFromFootpoints } from './braidInput.js';
import type { BraidReport, BraidSettings, BraidState } from './braidTracker.js';
import { braidStep, emptyBraidState } from './braidTracker.js';

export interface BraidSegmentStart {
  readonly time: number;
  readonly reason: string;
  readonly strands: readonly number[];
}

export interface BraidHistory<K> {
  readonly state: BraidState;
  /** The keys of every frame given, in order (folded or passed over). */
  readonly keys: readonly K[];
  readonly reports: ReadonlyMap<K, BraidReport>;
  readonly last?: BraidReport;
  readonly segments: readonly BraidSegmentStart[];
}

export function emptyBraidHistory<K>(): BraidHistory<K> {
  return { state: emptyBraidState(), keys: [], reports: new Map(), segments: [] };
}

export function extendBraidHistory<K>(
  history: BraidHistory<K>,
  frames: readonly { readonly key: K; readonly footpoints: FootpointsOfFrame }[],
  settings: BraidSettings = {},
): BraidHistory<K> {
  let { state, last } = history;
  const keys = [...history.keys];
  const reports = new Map(history.reports);
  const segments = [...history.segments];
  for (const { key, footpoints } of frames) {
    keys.push(key);
    if (last && !(footpoints.time > last.time)) continue;
    const step = braidStep(state, braidInputFromFootpoints(footpoints), settings);
    state = step.state;
    last = step.report;
    reports.set(key, last);
    if (last.segmentStarted !== null) segments.push({ time: last.time, reason: last.segmentStarted, strands: last.strands });
  }
  return { state, keys, reports, ...(last && { last }), segments };
}
