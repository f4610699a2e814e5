// How far back a worker's chunk must start so that its first samples, and the footpoint tracker
// state they are made from, equal those of a run that never stopped at the chunk border. Pure: it
// works on the archive's times and whether each frame carries its velocity.
//
// The analysis state before the chunk's first frame s is a function of the frames just before it
// (core/analysisMemory.ts): the previous frame, the frames within the motion baseline
// (restoreSpanS) kept for footpoint motions, and the tracker's memory of the last few tracked
// frames (footpoints that vanished within RECENT_FRAMES frames stay partners of a late
// cancellation). So the chunk is primed with every frame within restoreSpanS before each of the
// last RECENT_FRAMES + 1 frames that give a footpoint table before s (the last of them is the first
// frame of s's pair): each of those tables is then made exactly as in the whole run, the tracker
// links from the oldest of them on as the whole run does, and from s on nothing differs but the ids
// (which the merge maps, replay/chunkSeams.ts).

import { restoreSpanS } from '../core/analysisMemory.js';
import type { AnalysisSettings } from '../core/frameAnalysis.js';
import { RECENT_FRAMES } from '../core/footpoints/analyseFootpoints.js';
import { resolveVelocitySettings } from '../core/velocity/velocitySettings.js';

export interface PrimingEntry {
  /** UTC ms. */
  readonly time: number;
  readonly hasVelocity: boolean;
}

/** True when frame j gives a sample and a footpoint table (it carries its velocity, or pairs with j-1). */
function givesTable(entries: readonly PrimingEntry[], j: number, maxIntervalS: number): boolean {
  if (entries[j].hasVelocity) return true;
  return j > 0 && entries[j].time - entries[j - 1].time <= 1000 * maxIntervalS;
}

/** The first frame whose analysis frame j needs: j itself with a velocity, else its partner and the frames within the span. */
function firstNeededBy(entries: readonly PrimingEntry[], j: number, spanS: number): number {
  if (entries[j].hasVelocity) return j;
  let i = j - 1;
  while (i > 0 && entries[j].time - entries[i - 1].time <= 1000 * spanS) i--;
  return i;
}

/**
 * Index of the first frame the chunk starting at `start` must analyse (its primer frames are
 * `from .. start-1`); 0 when the chunk starts at the beginning or the primer reaches it.
 */
export function primerStart(entries: readonly PrimingEntry[], start: number, settings: unknown = {}): number {
  if (start <= 0) return 0;
  const s = (settings ?? {}) as AnalysisSettings;
  const spanS = restoreSpanS(s);
  let maxIntervalS: number;
  try {
    maxIntervalS = resolveVelocitySettings(s.velocity).maxIntervalS;
  } catch {
    return 0; // settings the analysis will refuse: the chunk starts at the beginning and says so itself
  }
  let from = start - 1;
  let tables = 0;
  for (let j = start - 1; j >= 0 && tables <= RECENT_FRAMES; j--) {
    if (!givesTable(entries, j, maxIntervalS)) continue;
    tables++;
    from = Math.min(from, firstNeededBy(entries, j, spanS));
  }
  return tables <= RECENT_FRAMES ? 0 : from;
}
