// What each viewer message does to the page's state, as a pure function: the snapshot replaces
// what it covers, samples and backfills merge by time (the picked sample stays picked by its
// time), alerts merge by id with their arrival noted on the wall clock, frames and status replace.

import { mergeAlerts } from './alertMarks.js';
import { mergeFrames } from './frameList.js';
import type { PageState } from './pageStore.js';
import { applySnapshot, mergeGaps, mergeSamples, nearestIndex, type SeriesPoint } from './seriesMerge.js';
import type { ViewerMessage, WireSample } from './wire.js';

/** The series with samples merged in and the picked index moved to the same sample time. */
export function withSamples(state: Readonly<PageState>, next: SeriesPoint[]): Partial<PageState> {
  const pickedT = state.pickedIndex >= 0 ? state.series[state.pickedIndex]?.t : undefined;
  return { series: next, pickedIndex: pickedT !== undefined ? nearestIndex(next, pickedT) : state.pickedIndex };
}

export function addSamples(state: Readonly<PageState>, samples: readonly WireSample[]): Partial<PageState> {
  return samples.length === 0 ? {} : withSamples(state, mergeSamples(state.series, samples));
}

/** The state change of one message; `nowMs` is the wall clock at arrival. */
export function applyViewerMessage(state: Readonly<PageState>, m: ViewerMessage, nowMs: number): Partial<PageState> {
  switch (m.type) {
    case 'snapshot':
      return {
        ...withSamples(state, applySnapshot(state.series, m.samples ?? [])),
        gaps: mergeGaps([], m.gaps ?? []),
        alerts: mergeAlerts([], m.alerts ?? []),
        status: m.status,
        ...(typeof m.gap_factor === 'number' && { gapFactor: m.gap_factor }),
        ...(m.latest_frame && { latestFrame: m.latest_frame, frames: mergeFrames(state.frames, [m.latest_frame]) }),
      };
    case 'sample':
      return addSamples(state, [m.sample]);
    case 'backfill':
      return addSamples(state, m.samples ?? []);
    case 'alert': {
      const arrivals = new Map(state.alertArrivals);
      arrivals.set(String(m.alert.id), nowMs);
      return { alerts: mergeAlerts(state.alerts, [m.alert]), alertArrivals: arrivals };
    }
    case 'frame':
      return { framesSeen: state.framesSeen + 1, latestFrame: { frame_id: m.frame_id, time: m.time }, frames: mergeFrames(state.frames, [m]) };
    case 'status':
      return { status: m.status };
  }
}
