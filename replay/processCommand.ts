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
import { basename, join } from 'node:path';
import type { AccumulationSettings, AccumulationState } from '../core/accumulate.js';
import { accumulate, accumulateRefusal, emptyAccumulation, intervalsS, seriesCadenceS } from '../core/accumulate.js';
import { alertRecords } from '../core/alerts/evaluateRules.js';
import type { AlertChange } from '../core/alerts/alertState.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { mergeAssemblySettings } from '../core/frameAssembly/componentLayouts.js';
import type { PatchCentre } from '../core/frameAssembly/wcs.js';
import { InputError } from '../core/inputError.js';
import type { RateSample } from '../core/rateSample.js';
import type { SeriesRow } from '../core/seriesColumns.js';
import { SERIES_COLUMNS, seriesCsv } from '../core/seriesColumns.js';
import type { ChunkJob, FrameOutcome } from './analyseChunk.js';
import type { ScannedFrame, SkippedFile } from './archiveOrder.js';
import type { FileScan } from './archiveSource.js';
import { indexScans, listFrameFiles } from './archiveSource.js';
import type { BatchConfig } from './batchConfig.js';
import { readBatchConfig } from './batchConfig.js';
import { primerStart } from './chunkPriming.js';
import type { ChunkOutput, MergedChunks, PrimerTable } from './chunkSeams.js';
import { mergeChunks } from './chunkSeams.js';
import { mapsFileName, relabelMapsFile } from './mapFiles.js';
import type { ProgressReport } from './progressReport.js';
import { progressReport } from './progressReport.js';
import type { WorkerPool } from './workerPool.js';
import { startWorkerPool } from './workerPool.js';

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

/** Splits n frames into `parts` contiguous chunks [start, end), sizes differing by at most one. */
export function contiguousChunks(n: number, parts: number): { start: number; end: number }[] {
  const out: { start: number; end: number }[] = [];
  const k = Math.max(1, Math.min(parts, n));
  for (let w = 0; w < k; w++) out.push({ start: Math.floor((w * n) / k), end: Math.floor(((w + 1) * n) / k) });
  return out.filter((c) => c.end > c.start);
}

async function scanAll(pool: WorkerPool, files: string[], components: FrameAssemblySettings, progress: ProgressReport): Promise<FileScan[]> {
  const results: FileScan[] = [];
  progress.start('reading', files.length);
  await Promise.all(contiguousChunks(files.length, pool.size).map((c, w) =>
    pool.run(w, { kind: 'scan', files: files.slice(c.start, c.end), components }, (r) => {
      if (r.kind === 'scanned') { results.push(r.result); progress.tick(); }
    })));
  progress.stop();
  return results;
}

async function analyseAll(
  pool: WorkerPool, jobs: ChunkJob[], entries: readonly ScannedFrame[], settings: unknown, components: FrameAssemblySettings,
  mapsDir: string | undefined, progress: ProgressReport,
): Promise<MergedChunks> {
  const chunks = contiguousChunks(jobs.length, pool.size);
  const outputs = chunks.map(() => ({ outcomes: [] as FrameOutcome[], primers: [] as PrimerTable[] }));
  progress.start('analysing', jobs.length);
  await Promise.all(chunks.map((c, w) => {
    // The chunk starts early: its primer frames only prime the state (and report their footpoints).
    const from = primerStart(entries, c.start, settings);
    return pool.run(w, {
      kind: 'analyse', jobs: jobs.slice(from, c.end), warmup: c.start - from, settings, components,
      ...(mapsDir !== undefined && { mapsDir }),
    }, (r) => {
      if (r.kind === 'frame') { outputs[w].outcomes.push(r.outcome); progress.tick(); }
      else if (r.kind === 'primer') outputs[w].primers.push(r.table);
    });
  }));
  progress.stop();
  const byIndex = (a: { index: number }, b: { index: number }) => a.index - b.index;
  const merged = mergeChunks(outputs.map((o): ChunkOutput => ({ outcomes: o.outcomes.sort(byIndex), primers: o.primers.sort(byIndex) })));
  if (mapsDir !== undefined) {
    // The label maps were written with each chunk's own ids.
    for (const [w, o] of outputs.entries()) {
      const ids = merged.idMaps[w];
      if ([...ids].every(([from, to]) => from === to)) continue;
      for (const outcome of o.outcomes) {
        if (outcome.extra?.footpoints !== undefined) await relabelMapsFile(join(mapsDir, mapsFileName(outcome.file)), ids);
      }
    }
  }
  return merged;
}

interface SeriesResult {
  rows: (SeriesRow & { file: string })[];
  state: AccumulationState;
  alertChanges: AlertChange[];
}

/** Budget, series rows and alerts from the samples in time order (refusals feed the data rules). */
function buildSeries(samples: { sample: RateSample; index: number; file: string; centre?: PatchCentre }[], refusalTimes: number[], config: BatchConfig, cadenceS?: number): SeriesResult {
  let state = emptyAccumulation();
  const settings: AccumulationSettings = {
    budget: { ...(cadenceS !== undefined && { cadenceS }), ...config.budget },
    rules: config.rules ?? {},
  };
  const rows: (SeriesRow & { file: string })[] = [];
  const alertChanges: AlertChange[] = [];
  const refusals = [...refusalTimes].sort((a, b) => a - b);
  let r = 0;
  const seen: number[] = [];
  for (const { sample, index, file, centre } of samples) {
    // Refusals up to this sample's time, in order, so the data rules see them when they happened.
    while (r < refusals.length && refusals[r] <= sample.time) {
      seen.push(refusals[r]);
      const step = accumulateRefusal(state, refusals[r], seen, settings);
      state = step.state;
      alertChanges.push(...step.changes.map((c) => c.change));
      r++;
    }
    if (state.budget.lastTime !== undefined && !(sample.time > state.budget.lastTime)) continue;
    const step = accumulate(state, sample, settings, { frameId: index, centre });
    state = step.state;
    alertChanges.push(...step.changes.map((c) => c.change));
    rows.push({ ...step.row, file });
  }
  return { rows, state, alertChanges };
}

/** Times of footpoints and events (UTC ms in core) as ISO strings. */
const TIME_KEYS = new Set(['time', 'born', 'died', 'since']);

/** JSON.stringify replacer: typed arrays as arrays, NaN and infinities as null, times as ISO. */
function jsonValue(key: string, v: unknown): unknown {
  if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number>);
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) return null;
    if (TIME_KEYS.has(key)) return new Date(v).toISOString();
  }
  return v;
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
  let index;
  try {
    index = indexScans(await scanAll(pool, files, components, progress), components);
    const jobs = index.entries.map((e, i): ChunkJob => ({ index: i, file: e.file, ...(e.files && { files: e.files }) }));
    const merged = jobs.length > 0 ? await analyseAll(pool, jobs, index.entries, config.analysis, components, args.maps, progress) : undefined;
    outcomes = merged?.outcomes ?? [];
    unmatched = merged?.unmatched ?? 0;
  } finally {
    await pool.close();
  }
  const skipped: SkippedFile[] = index.skipped.map((s) => ({ file: s.file, reason: s.reason }));
  // Frames set aside that have a time feed the refusals rule.
  const refusalTimes = index.skipped.flatMap((s) => (s.time !== undefined ? [s.time] : []));
  const samples: { sample: RateSample; index: number; file: string; centre?: PatchCentre }[] = [];
  const extras: { index: number; file: string; time?: number; extra: Record<string, unknown> }[] = [];
  const waiting: { file: string; reason: string }[] = [];
  let used = 0;
  for (const o of outcomes) {
    if (!o) continue;
    if (o.skipped !== undefined) { skipped.push({ file: o.file, reason: o.skipped }); continue; }
    used++;
    if (o.sample) samples.push({ sample: o.sample, index: o.index, file: o.file, ...(o.centre && { centre: o.centre }) });
    else if (o.waiting !== undefined) waiting.push({ file: o.file, reason: o.waiting });
    if (o.extra) extras.push({ index: o.index, file: o.file, ...(o.time !== undefined && { time: o.time }), extra: o.extra });
  }
  skipped.sort((a, b) => (a.file < b.file ? -1 : a.file > b.file ? 1 : 0));
  samples.sort((a, b) => a.sample.time - b.sample.time);
  // The budget's gap rule starts from the archive's cadence until it has seen enough intervals.
  const cadenceS = seriesCadenceS(intervalsS(index.entries.map((e) => e.time)));
  const series = buildSeries(samples, refusalTimes, config, cadenceS);

  await writeFile(args.out, seriesCsv(series.rows));
  if (args.json !== undefined) {
    // Footpoints: one report per analysed frame (at the time the rate was taken); events from
    // the reports (or from the analysis itself), with the frame they came from.
    const footpoints = extras.filter((e) => e.extra.footpoints !== undefined)
      .map((e) => ({ file: basename(e.file), ...(e.extra.footpoints as Record<string, unknown>) }));
    const events = extras.flatMap((e) => {
      const list = (e.extra.footpoints as { events?: unknown } | undefined)?.events ?? e.extra.events;
      return Array.isArray(list) ? list.map((ev: unknown) => ({ file: basename(e.file), ...(ev as Record<string, unknown>) })) : [];
    });
    const velocityNotes = [...new Set(extras.flatMap((e) => (Array.isArray(e.extra.velocityNotes) ? e.extra.velocityNotes as string[] : [])))];
    const json = {
      folder: args.folder,
      frames: { used, skipped, reordered: index.reordered, waiting },
      columns: SERIES_COLUMNS,
      samples: series.rows,
      gaps: series.state.budget.gaps.map((g) => ({ from: new Date(g.from).toISOString(), to: new Date(g.to).toISOString(), bridged: g.bridged, median_cadence_s: g.medianCadenceS })),
      ...(velocityNotes.length > 0 && { velocity_notes: velocityNotes }),
      ...(footpoints.length > 0 && { footpoints }),
      ...(events.length > 0 && { events }),
      alerts: alertRecords(series.state.rules),
      alert_changes: series.alertChanges,
    };
    await writeFile(args.json, JSON.stringify(json, jsonValue, 2));
  }
  progress.line(`used ${used} frame${used === 1 ? '' : 's'}, skipped ${skipped.length}; ${series.rows.length} rate samples written to ${args.out}`);
  for (const s of skipped) progress.line(`  skipped ${s.file}: ${s.reason}`);
  if (index.reordered.length > 0) progress.line(`  ${index.reordered.length} file(s) were out of name order and were taken in time order`);
  if (series.rows.length === 0 && waiting.length > 0) progress.line(`  no rate sample: ${waiting[0].reason}`);
  if (unmatched > 0) progress.line(`  ${unmatched} footpoint(s) at worker chunk borders were not found in the chunk before and took new ids (their windings and spin budgets start there)`);
  return { used, skipped, samples: series.rows.length, reordered: [...index.reordered] };
}
