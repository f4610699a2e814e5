// `helicord process FOLDER --out RESULT.csv [--json RESULT.json] [--maps DIR] [--config FILE]`:
// a whole archive through the per-frame step of the pipeline without a server. The folder is
// scanned by the workers (every file read and described), put in time order (archiveOrder.ts),
// cut into one contiguous chunk per worker, each primed with the frames before it that the
// analysis state depends on (chunkPriming.ts: the motion baseline and the tracker's last frames,
// so the pair at each border is made by the chunk after it, exactly as in one run), analysed, and
// merged in time order with footpoint ids, windings and spin budgets carried across the borders
// (chunkSeams.ts). The samples go through core/accumulate.ts, the monitor's own step: the budget,
// the alert rules and the series row.
// Unusable files are reported with their reason and skipped; the run goes on.

import { availableParallelism } from 'node:os';
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { mergeAssemblySettings } from '../core/frameAssembly/componentLayouts.js';
import { InputError } from '../core/inputError.js';
import { seriesCsv } from '../core/seriesColumns.js';
import type { ChunkJob, FrameOutcome } from './analyseChunk.js';
import type { ArchiveIndex, SkippedFile } from './archiveOrder.js';
import { indexScans, listFrameFiles } from './archiveSource.js';
import { archiveJson, archiveSeries, jsonValue } from './archiveSeries.js';
import { readBatchConfig } from './batchConfig.js';
import { mergeChunks } from './chunkSeams.js';
import { mapsFileName, relabelMapsFile } from './mapFiles.js';
import { analyseSpan, scanFiles } from './pooledBatch.js';
import { progressReport } from './progressReport.js';
import { startWorkerPool } from './workerPool.js';

export { contiguousChunks } from './pooledBatch.js';

export interface ProcessArgs {
  readonly folder: string;
  /** The CSV file. */
  readonly out: string;
  readonly json?: string;
  /** Folder for one FITS file of maps per analysed frame. */
  readonly maps?: string;
  /** A JSON file: { analysis?, budget?, rules?, components? } (replay/batchConfig.ts). */
  readonly config?: string;
  /** How FITS files map to components, over the config file's `components` (component by component). */
  readonly components?: FrameAssemblySettings;
  /** Worker threads; every core by default. */
  readonly workers?: number;
  /** Where progress goes (stderr by default). */
  readonly progress?: NodeJS.WritableStream;
}

export interface ProcessSummary {
  /** Frames analysed. */
  readonly used: number;
  /** Files not used, in name order, each with its reason. */
  readonly skipped: SkippedFile[];
  /** Rate samples written. */
  readonly samples: number;
  /** Files whose time order differs from their name order (used in time order). */
  readonly reordered: string[];
}

export async function processFolder(args: ProcessArgs): Promise<ProcessSummary> {
  const progress = progressReport(args.progress ?? process.stderr);
  const config = await readBatchConfig(args.config);
  const components = mergeAssemblySettings(config.components, args.components ?? {});
  const files = await listFrameFiles(args.folder);
  if (files.length === 0) throw new InputError(args.folder, '(folder)', 'holds no frame files (.json, .fits)');
  if (args.workers !== undefined && (!Number.isInteger(args.workers) || args.workers < 1)) {
    throw new InputError('process', 'workers', `must be a positive integer, got ${args.workers}`);
  }
  if (args.maps !== undefined) await mkdir(args.maps, { recursive: true });
  const size = Math.min(args.workers ?? availableParallelism(), files.length);
  const pool = startWorkerPool(size);
  let outcomes: FrameOutcome[];
  let unmatched = 0;
  let index: ArchiveIndex;
  try {
    progress.start('reading', files.length);
    index = indexScans(await scanFiles(pool, files, components, () => progress.tick()), components);
    progress.stop();
    const jobs = index.entries.map((e, i): ChunkJob => ({ index: i, file: e.file, ...(e.files && { files: e.files }) }));
    let merged;
    if (jobs.length > 0) {
      progress.start('analysing', jobs.length);
      const chunks = await analyseSpan(pool, jobs, index.entries, { start: 0, end: jobs.length }, {
        settings: config.analysis, components, tick: () => progress.tick(), ...(args.maps !== undefined && { mapsDir: args.maps }),
      });
      progress.stop();
      merged = mergeChunks(chunks);
      if (args.maps !== undefined) {
        // The label maps were written with each chunk's own ids.
        for (const [w, o] of chunks.entries()) {
          const ids = merged.idMaps[w];
          if ([...ids].every(([from, to]) => from === to)) continue;
          for (const outcome of o.outcomes) {
            if (outcome.extra?.footpoints !== undefined) await relabelMapsFile(join(args.maps, mapsFileName(outcome.file)), ids);
          }
        }
      }
    }
    outcomes = merged?.outcomes ?? [];
    unmatched = merged?.unmatched ?? 0;
  } finally {
    await pool.close();
  }
  const result = archiveSeries(index, outcomes, config);
  const { used, skipped, waiting, series } = result;

  await writeFile(args.out, seriesCsv(series.rows));
  if (args.json !== undefined) await writeFile(args.json, JSON.stringify(archiveJson(args.folder, index.reordered, result), jsonValue, 2));
  progress.line(`used ${used} frame${used === 1 ? '' : 's'}, skipped ${skipped.length}; ${series.rows.length} rate samples written to ${args.out}`);
  for (const s of skipped) progress.line(`  skipped ${s.file}: ${s.reason}`);
  if (index.reordered.length > 0) progress.line(`  ${index.reordered.length} file(s) were out of name order and were taken in time order`);
  if (series.rows.length === 0 && waiting.length > 0) progress.line(`  no rate sample: ${waiting[0].reason}`);
  if (unmatched > 0) progress.line(`  ${unmatched} footpoint(s) at worker chunk borders were not found in the chunk before and took new ids (their windings and spin budgets start there)`);
  return { used, skipped, samples: series.rows.length, reordered: [...index.reordered] };
}
