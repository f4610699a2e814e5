// What the per-frame analysis must remember across a restart, a rewind or the border of a batch
// chunk, in a form that can be stored as JSON: the footpoint tracker's table (ids, centroids,
// fluxes, windings, budgets), without its maps. The maps come back from the stored frames
// themselves: the analysis state after a frame is a function of that frame, the frames within the
// motion baseline before it, and this memory; segmentation is deterministic, so the regions found
// again on the same frame are the very regions the memory describes, and each takes its stored id
// back.

import type { AnalysisSettings, AnalysisState } from './frameAnalysis.js';
import { DEFAULT_MOTION_BASELINE_S } from './frameAnalysis.js';
import type { Frame } from './frame.js';
import { hasVelocity } from './frame.js';
import type { FootpointState } from './footpoints/analyseFootpoints.js';
import { regionProperties } from './footpoints/regionProperties.js';
import { SEGMENTATION_DEFAULTS, segmentFootpoints } from './footpoints/segmentation.js';
import { smoothMap } from './footpoints/smoothing.js';
import { midFrame } from './velocity/midFrame.js';
import { InputError } from './inputError.js';
import { resolveVelocitySettings } from './velocity/velocitySettings.js';

/** The JSON-safe part of a footpoint state (no label map, no field). */
export type FootpointMemory = Omit<FootpointState, 'labels' | 'field'>;

export interface AnalysisMemory {
  readonly version: 1;
  /** Time of the last frame analysed, UTC ms. */
  readonly time: number;
  readonly footpoints?: FootpointMemory;
}

/** The storable memory of an analysis state (after the frame at `state.previous`). */
export function analysisMemory(state: AnalysisState): AnalysisMemory | undefined {
  if (!state.previous) return undefined;
  const fp = state.footpoints;
  if (!fp) return { version: 1, time: state.previous.time };
  const { labels: _labels, field: _field, ...table } = fp;
  void _labels; void _field;
  return { version: 1, time: state.previous.time, footpoints: table };
}

/** How far back (s) the frames must reach to restore a state: the motion baseline. */
export function restoreSpanS(settings: AnalysisSettings = {}): number {
  return settings.motionBaselineS ?? DEFAULT_MOTION_BASELINE_S;
}

/**
 * The analysis state after the last of `frames` (oldest first, consecutive frames of the region,
 * reaching back `restoreSpanS` when there are that many), with the footpoint memory stored after
 * it. Without a memory the state has no footpoint history (ids start afresh).
 */
export function restoreAnalysisState(frames: readonly Frame[], memory: AnalysisMemory | undefined, settings: AnalysisSettings = {}): AnalysisState {
  if (frames.length === 0) return {};
  const last = frames[frames.length - 1];
  if (memory && memory.time !== last.time) {
    throw new InputError('analysis memory', 'time', `is for ${new Date(memory.time).toISOString()} but the last frame is at ${new Date(last.time).toISOString()}`);
  }
  const smoothing = (settings.footpoints || undefined)?.smoothing ?? SEGMENTATION_DEFAULTS.smoothing;
  const spanS = restoreSpanS(settings);
  // As the run keeps it: frames within the span, none from before an interval too long to infer
  // a velocity across (the run starts its history again there).
  const maxIntervalS = resolveVelocitySettings(settings.velocity).maxIntervalS;
  let first = 0;
  for (let k = 1; k < frames.length; k++) if (frames[k].time - frames[k - 1].time > 1000 * maxIntervalS) first = k;
  const history = frames.slice(first)
    .filter((f) => last.time - f.time <= 1000 * spanS)
    .map((f) => ({ time: f.time, field: smoothMap(f.bn, f.nx, f.ny, smoothing) }));
  const state: AnalysisState = { previous: last, history };
  const table = memory?.footpoints;
  if (!table || settings.footpoints === false) return state;
  // The footpoints were found on the frame the rate was taken on: a frame that carries its velocity,
  // else the mid-time frame of its pair. After a pair that gave no sample (frames too far apart)
  // the table belongs to an older pair: its frames must be among these (the caller adds them; see
  // memoryFrameTime), else the footpoints start afresh (ids too).
  const rateFrame = rateFrameAt(frames, table.time);
  if (!rateFrame) return state;
  return { ...state, footpoints: restoreFootpointState(table, rateFrame, settings.footpoints || {}) };
}

/** The frame a footpoint table made at `time` was found on: the frame at that time (its velocity given, or the first frame), or the mid-time frame of a pair. */
function rateFrameAt(frames: readonly Frame[], time: number): Frame | undefined {
  for (let k = frames.length - 1; k >= 0; k--) {
    const f = frames[k];
    if (f.time === time) return f;
    if (!hasVelocity(f) && k > 0 && (frames[k - 1].time + f.time) / 2 === time) return midFrame(frames[k - 1], f);
  }
  return undefined;
}

/**
 * When the memory's footpoint table was made, UTC ms (undefined without one): a caller restoring
 * the state gives restoreAnalysisState the frames within the motion baseline, and also the frames
 * around this time when it lies before them (a pair too far apart gave no table since).
 */
export function memoryFrameTime(memory: AnalysisMemory | undefined): number | undefined {
  return memory?.footpoints?.time;
}

/**
 * The footpoint state of `memory` on the frame it was made on: segmented again with the same
 * settings, each region takes the id of the stored footpoint at its centroid (same polarity).
 */
export function restoreFootpointState(memory: FootpointMemory, frame: Frame, settings: Parameters<typeof segmentFootpoints>[2]): FootpointState {
  const grid = memory.grid;
  const seg = segmentFootpoints(frame.bn, grid, settings);
  const regions = regionProperties(seg.labels, frame.bn, grid);
  const idOf = new Int32Array(seg.count + 1);
  const tolerance = 1e-6 * Math.max(grid.dx, grid.dy);
  const free = new Set(memory.footpoints.map((f) => f.id));
  for (const r of regions) {
    const match = memory.footpoints.find((f) => free.has(f.id) && f.polarity === r.polarity
      && Math.abs(f.x - r.fluxWeighted.x) <= tolerance && Math.abs(f.y - r.fluxWeighted.y) <= tolerance);
    if (match) { idOf[r.label] = match.id; free.delete(match.id); }
  }
  const labels = new Int32Array(seg.labels.length);
  for (let i = 0; i < labels.length; i++) labels[i] = idOf[seg.labels[i]];
  return { ...memory, labels, field: seg.field };
}
