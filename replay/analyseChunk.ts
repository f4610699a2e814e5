// One contiguous run of an archive through the per-frame step of the pipeline (core analyseFrame),
// as a worker does it: frames are read one at a time, the state passes from frame to frame, and
// the first `warmup` frames only prime the state (their samples belong to the chunk before,
// replay/chunkPriming.ts says how many are needed). The footpoints found on primer frames are
// reported (`onPrimer`), so that the merge can map this chunk's footpoint ids onto the ids the
// chunk before gave the same footpoints (replay/chunkSeams.ts).
// Settings and state are the analysis's own business: they are passed through untouched.

import type { AnalysisSettings, AnalysisState, FrameAnalysis } from '../core/frameAnalysis.js';
import { analyseFrame } from '../core/frameAnalysis.js';
import type { FrameCache } from '../core/frameTasks.js';
import type { Frame } from '../core/frame.js';
import type { RateSample } from '../core/rateSample.js';
import type { FootpointAnalysis } from '../core/footpoints/analyseFootpoints.js';
import { footpointReport } from '../core/footpoints/footpointReport.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import type { PatchCentre } from '../core/frameAssembly/wcs.js';
import { framePatchCentre, meanCentre } from '../core/frameAssembly/wcs.js';
import { loadEntry, reasonOf } from './archiveSource.js';
import type { PrimerTable } from './chunkSeams.js';

export interface ChunkJob {
  /** Position of the frame in the ordered archive. */
  readonly index: number;
  readonly file: string;
  /** With one file per component: all the frame's files (bn's first). */
  readonly files?: readonly string[];
}

/** What became of one frame. */
export interface FrameOutcome {
  readonly index: number;
  readonly file: string;
  readonly time?: number;
  readonly sample?: RateSample;
  /** Why no sample came from this frame (e.g. the first frame of a pair). */
  readonly waiting?: string;
  /** Why the frame was skipped when it could not be read or analysed. */
  readonly skipped?: string;
  /** Whatever else the analysis reports (footpoints, events, ...), passed on as it is. */
  readonly extra?: Record<string, unknown>;
  /**
   * Where the sample was taken on the Sun, when the frames' headers say (the mean of the pair's
   * two frames for a sample at their mid-time).
   */
  readonly centre?: PatchCentre;
}

export type MapWriter = (job: ChunkJob, frame: Frame, maps: FrameAnalysis['maps'], sample: RateSample | undefined) => Promise<void>;

export interface ChunkOptions {
  readonly settings?: unknown;
  readonly cache?: FrameCache;
  /** Called with each analysed frame's maps (not for warm-up frames). */
  readonly writeMaps?: MapWriter;
  /** How FITS files map to components (for the default reader). */
  readonly components?: FrameAssemblySettings;
  /** Reads a frame; from its file (or component files) with `components` by default. */
  readonly load?: (job: ChunkJob) => Promise<Frame>;
  /** Called with the footpoints of each primer frame that has some, oldest first; the last also carries the pair windings. */
  readonly onPrimer?: (table: PrimerTable) => void;
}

function primerTable(index: number, fp: FootpointAnalysis, withWindings: boolean): PrimerTable {
  return {
    index,
    footpoints: fp.footpoints.map((r) => ({ id: r.id, polarity: r.polarity, x: r.x, y: r.y, born: r.born, spinBudget: r.spinBudget })),
    // Turns as the footpoint report computes them from the tracker's angle.
    ...(withWindings && { windings: fp.state.pairs.map((p) => [p.a, p.b, p.winding / (2 * Math.PI)] as const) }),
  };
}

export async function analyseChunk(
  jobs: readonly ChunkJob[], warmup: number, onOutcome: (o: FrameOutcome) => void, options: ChunkOptions = {},
): Promise<void> {
  const cache = options.cache ?? new Map();
  const load = options.load ?? ((job: ChunkJob) => loadEntry(job, options.components));
  const settings = (options.settings ?? {}) as AnalysisSettings;
  let state: AnalysisState = {};
  // The centre of the last frame analysed (the first of the next sample's pair).
  let lastCentre: PatchCentre | undefined;
  // The latest primer frame's footpoints wait until it is known whether it is the last (the seam).
  let pending: { index: number; fp: FootpointAnalysis } | undefined;
  const flushPrimer = (seam: boolean) => {
    if (pending && options.onPrimer) options.onPrimer(primerTable(pending.index, pending.fp, seam));
    pending = undefined;
  };
  for (let k = 0; k < jobs.length; k++) {
    const job = jobs[k];
    const primer = k < warmup;
    if (k === warmup) flushPrimer(true);
    let frame: Frame;
    let result: FrameAnalysis;
    try {
      frame = await load(job);
      result = analyseFrame(frame, state, settings, cache);
    } catch (e) {
      // The state stays as it was: the next frame pairs with the last good one.
      if (!primer) onOutcome({ index: job.index, file: job.file, skipped: reasonOf(e) });
      continue;
    }
    state = result.state;
    const centre = framePatchCentre(frame);
    const before = lastCentre;
    lastCentre = centre;
    if (primer) {
      if (result.footpoints) { flushPrimer(false); pending = { index: job.index, fp: result.footpoints }; }
      continue;
    }
    const { sample, waiting, maps, state: _next, ...rest } = result as FrameAnalysis & Record<string, unknown>;
    void _next;
    // Footpoints travel as their JSON-ready report (table, events, pairs), without the label
    // map and the tracker state, which stay in the worker.
    const extra: Record<string, unknown> = { ...rest };
    const fp = extra.footpoints as FootpointAnalysis | undefined;
    if (fp && fp.labels instanceof Int32Array && fp.state !== undefined) extra.footpoints = footpointReport(fp, true);
    if (Array.isArray(extra.velocityNotes) && extra.velocityNotes.length === 0) delete extra.velocityNotes;
    if (options.writeMaps) await options.writeMaps(job, frame, maps, sample);
    const sampleCentre = sample && (sample.dtS > 0 ? meanCentre(before, centre) : centre);
    onOutcome({
      index: job.index, file: job.file, time: frame.time,
      ...(sample && { sample }),
      ...(sampleCentre && { centre: sampleCentre }),
      ...(waiting !== undefined && { waiting }),
      ...(Object.keys(extra).length > 0 && { extra }),
    });
  }
  flushPrimer(true);
}
