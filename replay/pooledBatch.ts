// The two steps of a batch run that go through the worker pool: scanning files (each read and
// described) and analysing a span of an ordered archive cut into contiguous chunks (one or two per
// worker), each chunk primed with the frames before it that the analysis state depends on
// (chunkPriming.ts). The chunks come back raw (outcomes and primer tables): the caller stitches
// them with chunkSeams.ts, alone (`process`) or beside the chunks of other tasks (`survey`).

import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import type { ChunkJob, FrameOutcome } from './analyseChunk.js';
import type { ScannedFrame } from './archiveOrder.js';
import type { FileScan } from './archiveSource.js';
import { primerStart } from './chunkPriming.js';
import type { ChunkOutput, PrimerTable } from './chunkSeams.js';
import type { WorkerPool } from './workerPool.js';

/** Splits n frames into `parts` contiguous chunks [start, end), sizes differing by at most one. */
export function contiguousChunks(n: number, parts: number): { start: number; end: number }[] {
  const out: { start: number; end: number }[] = [];
  const k = Math.max(1, Math.min(parts, n));
  for (let w = 0; w < k; w++) out.push({ start: Math.floor((w * n) / k), end: Math.floor(((w + 1) * n) / k) });
  return out.filter((c) => c.end > c.start);
}

/** Every file read and described by the pool's workers; `tick` after each. */
export async function scanFiles(pool: WorkerPool, files: readonly string[], components: FrameAssemblySettings, tick: () => void = () => undefined): Promise<FileScan[]> {
  const results: FileScan[] = [];
  await Promise.all(contiguousChunks(files.length, pool.size).map((c, w) =>
    pool.run(w, { kind: 'scan', files: files.slice(c.start, c.end), components }, (r) => {
      if (r.kind === 'scanned') { results.push(r.result); tick(); }
    })));
  return results;
}

export interface SpanOptions {
  readonly settings: unknown;
  readonly components: FrameAssemblySettings;
  /** Folder for one FITS file of maps per analysed frame. */
  readonly mapsDir?: string;
  /** Called after each analysed frame (not primer frames). */
  readonly tick?: () => void;
}

/** Most primer frames that splitting a span into two chunks per worker may add, as a share of the span. */
export const EXTRA_PRIMER_SHARE = 0.05;

/**
 * The chunks of a span for `workers` workers, in time order: one per worker, or two per worker when
 * the primer frames the extra borders need (chunkPriming.ts) add at most EXTRA_PRIMER_SHARE of the
 * span. Later frames of a region's archive often cost more (more and larger footpoints), so equal
 * chunks finish at different times; with more chunks than workers, dealt latest first, a worker
 * done early takes an earlier, cheaper one.
 */
export function spanChunks(
  entries: readonly ScannedFrame[], span: { start: number; end: number }, workers: number, settings: unknown,
): { start: number; end: number }[] {
  const cut = (parts: number) => contiguousChunks(span.end - span.start, parts).map((c) => ({ start: c.start + span.start, end: c.end + span.start }));
  const primers = (chunks: { start: number }[]) => chunks.reduce((sum, c) => sum + c.start - primerStart(entries, c.start, settings), 0);
  const one = cut(workers);
  if (workers < 2) return one;
  const two = cut(2 * workers);
  return primers(two) - primers(one) <= EXTRA_PRIMER_SHARE * (span.end - span.start) ? two : one;
}

/**
 * Frames `span.start .. span.end-1` of the ordered archive (`jobs[i]` is `entries[i]`) in chunks
 * (spanChunks), each primed from the frames before it, dealt to the workers latest chunk first, a
 * worker taking the next as soon as it is free. The chunks in time order, each with its outcomes
 * and primer tables in archive order.
 */
export async function analyseSpan(
  pool: WorkerPool, jobs: readonly ChunkJob[], entries: readonly ScannedFrame[], span: { start: number; end: number }, options: SpanOptions,
): Promise<ChunkOutput[]> {
  const chunks = spanChunks(entries, span, pool.size, options.settings);
  const outputs = chunks.map(() => ({ outcomes: [] as FrameOutcome[], primers: [] as PrimerTable[] }));
  const runChunk = (w: number, k: number) => {
    const c = chunks[k];
    // The chunk starts early: its primer frames only prime the state (and report their footpoints).
    const from = primerStart(entries, c.start, options.settings);
    return pool.run(w, {
      kind: 'analyse', jobs: jobs.slice(from, c.end), warmup: c.start - from, settings: options.settings, components: options.components,
      ...(options.mapsDir !== undefined && { mapsDir: options.mapsDir }),
    }, (r) => {
      if (r.kind === 'frame') { outputs[k].outcomes.push(r.outcome); options.tick?.(); }
      else if (r.kind === 'primer') outputs[k].primers.push(r.table);
    });
  };
  let next = chunks.length - 1;
  const worker = async (w: number) => { while (next >= 0) await runChunk(w, next--); };
  await Promise.all(Array.from({ length: Math.min(pool.size, chunks.length) }, (_, w) => worker(w)));
  const byIndex = (a: { index: number }, b: { index: number }) => a.index - b.index;
  return outputs.map((o): ChunkOutput => ({ outcomes: o.outcomes.sort(byIndex), primers: o.primers.sort(byIndex) }));
}
