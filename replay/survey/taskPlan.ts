// The tasks of a survey: one per region, a long region cut into contiguous chunks of at most
// `chunkFrames` frames (sizes differing by at most one). Chunks do not overlap in the frames they
// report: each task analyses its frames after the frames before them that the analysis state
// depends on (replay/chunkPriming.ts, worked out by the task from the region's index), and the
// merge stitches footpoint ids, windings and spin budgets at each seam (replay/chunkSeams.ts).
// Pure.

import { contiguousChunks } from '../pooledBatch.js';

export interface SurveyTask {
  /** The array index (0-based, in region order then time order). */
  readonly id: number;
  readonly region: string;
  /** Frames start .. end-1 of the region's ordered frames are this task's. */
  readonly start: number;
  readonly end: number;
  /**
   * The first frame it analyses: frames primerFrom .. start-1 only prime the analysis state (the
   * overlap with the task before, replay/chunkPriming.ts); start when there are none.
   */
  readonly primerFrom: number;
}

/**
 * The tasks of the regions in order; `primerOf(region, start)` says where a chunk starting at
 * `start` must begin (replay/chunkPriming.ts primerStart over the region's frames).
 */
export function planTasks(regions: readonly { name: string; frames: number }[], chunkFrames: number, primerOf: (region: string, start: number) => number): SurveyTask[] {
  if (!(Number.isInteger(chunkFrames) && chunkFrames >= 1)) throw new Error(`chunkFrames must be a positive integer, got ${chunkFrames}`);
  const tasks: SurveyTask[] = [];
  for (const r of regions) {
    if (r.frames === 0) continue;
    for (const c of contiguousChunks(r.frames, Math.ceil(r.frames / chunkFrames))) {
      tasks.push({ id: tasks.length, region: r.name, ...c, primerFrom: c.start === 0 ? 0 : primerOf(r.name, c.start) });
    }
  }
  return tasks;
}

/** "0-3,7,9-10": task ids as sbatch --array takes them. */
export function arraySpec(ids: readonly number[]): string {
  const sorted = [...new Set(ids)].sort((a, b) => a - b);
  const parts: string[] = [];
  for (let i = 0; i < sorted.length;) {
    let j = i;
    while (j + 1 < sorted.length && sorted[j + 1] === sorted[j] + 1) j++;
    parts.push(j > i ? `${sorted[i]}-${sorted[j]}` : String(sorted[i]));
    i = j + 1;
  }
  return parts.join(',');
}
