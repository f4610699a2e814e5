// The series of an analysed archive: what became of each frame (used, skipped with the reason,
// waiting for a partner), the samples in time order through core/accumulate.ts (the monitor's own
// step: budget, alert rules, series row; files set aside feed the refusals rule when they happened),
// and the JSON document `process --json` writes. Pure: it works on what the workers reported.

import type { AccumulationSettings, AccumulationState } from '../core/accumulate.js';
import { accumulate, accumulateRefusal, emptyAccumulation, intervalsS, seriesCadenceS } from '../core/accumulate.js';
import { alertRecords } from '../core/alerts/evaluateRules.js';
import type { AlertChange } from '../core/alerts/alertState.js';
import type { BraidReport, BraidSettings } from '../core/braid/braidTracker.js';
import { emptyBraidHistory, extendBraidHistory } from '../core/braid/braidHistory.js';
import { braidColumns, braidReportJson } from '../core/braid/braidColumns.js';
import type { FootpointReport } from '../core/footpoints/footpointReport.js';
import type { PatchCentre } from '../core/frameAssembly/wcs.js';
import type { RateSample } from '../core/rateSample.js';
import type { SeriesRow } from '../core/seriesColumns.js';
import { SERIES_COLUMNS } from '../core/seriesColumns.js';
import { basename } from 'node:path';
import type { FrameOutcome } from './analyseChunk.js';
import type { ArchiveIndex, SkippedFile } from './archiveOrder.js';
import type { BatchConfig } from './batchConfig.js';

export interface SeriesResult {
  rows: (SeriesRow & { file: string })[];
  state: AccumulationState;
  alertChanges: AlertChange[];
}

export interface ArchiveSeries {
  /** Frames analysed. */
  readonly used: number;
  /** Files not used, in name order, each with its reason. */
  readonly skipped: SkippedFile[];
  /** Frames that gave no sample, and why (the first frame of a pair). */
  readonly waiting: { file: string; reason: string }[];
  /** Whatever else the analysis reported per frame (footpoints, events, notes). */
  readonly extras: { index: number; file: string; time?: number; extra: Record<string, unknown> }[];
  readonly series: SeriesResult;
  /** The braid of the largest footpoints after each frame with footpoints (by frame index), and the last. */
  readonly braid?: { readonly byIndex: ReadonlyMap<number, BraidReport>; readonly last?: BraidReport; readonly segments: readonly { time: number; reason: string; strands: readonly number[] }[] };
}

/** The braid fold (core/braid/braidHistory.ts) over the frames' footpoint reports in time order. */
function archiveBraid(extras: ArchiveSeries['extras'], settings: BraidSettings = {}): NonNullable<ArchiveSeries['braid']> {
  const frames = extras.map((e) => ({ key: e.index, footpoints: e.extra.footpoints as FootpointReport | undefined }))
    .filter((e): e is { key: number; footpoints: FootpointReport } => e.footpoints?.footpoints !== undefined)
    .sort((a, b) => a.footpoints.time - b.footpoints.time);
  const h = extendBraidHistory(emptyBraidHistory<number>(), frames, settings);
  return { byIndex: h.reports, ...(h.last && { last: h.last }), segments: h.segments };
}

/** Budget, series rows and alerts from the samples in time order (refusals feed the data rules). */
function buildSeries(samples: { sample: RateSample; index: number; file: string; centre?: PatchCentre }[], refusalTimes: number[], config: BatchConfig, cadenceS?: number, braid?: ArchiveSeries['braid']): SeriesResult {
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
    rows.push({ ...step.row, ...(braid && braidColumns(braid.byIndex.get(index))), file });
  }
  return { rows, state, alertChanges };
}

/**
 * The series of an archive from its index (the ordered frames and the files set aside at the scan)
 * and the merged outcomes of its frames (chunkSeams.ts), in archive order.
 */
export function archiveSeries(index: Pick<ArchiveIndex, 'entries' | 'skipped'>, outcomes: readonly FrameOutcome[], config: BatchConfig): ArchiveSeries {
  const skipped: SkippedFile[] = index.skipped.map((s) => ({ file: s.file, reason: s.reason }));
  // Frames set aside that have a time feed the refusals rule.
  const refusalTimes = index.skipped.flatMap((s) => (s.time !== undefined ? [s.time] : []));
  const samples: { sample: RateSample; index: number; file: string; centre?: PatchCentre }[] = [];
  const extras: ArchiveSeries['extras'] = [];
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
  const braid = archiveBraid(extras, config.braid);
  return { used, skipped, waiting, extras, series: buildSeries(samples, refusalTimes, config, cadenceS, braid), braid };
}

/** Times of footpoints and events (UTC ms in core) as ISO strings. */
const TIME_KEYS = new Set(['time', 'born', 'died', 'since']);

/** JSON.stringify replacer: typed arrays as arrays, NaN and infinities as null, times as ISO. */
export function jsonValue(key: string, v: unknown): unknown {
  if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number>);
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) return null;
    if (TIME_KEYS.has(key)) return new Date(v).toISOString();
  }
  return v;
}

/** The JSON document of an archive's series (`process --json`; stringify it with jsonValue). */
export function archiveJson(folder: string, reordered: readonly string[], a: ArchiveSeries): Record<string, unknown> {
  // Footpoints: one report per analysed frame (at the time the rate was taken); events from
  // the reports (or from the analysis itself), with the frame they came from.
  const footpoints = a.extras.filter((e) => e.extra.footpoints !== undefined)
    .map((e) => ({ file: basename(e.file), ...(e.extra.footpoints as Record<string, unknown>) }));
  const events = a.extras.flatMap((e) => {
    const list = (e.extra.footpoints as { events?: unknown } | undefined)?.events ?? e.extra.events;
    return Array.isArray(list) ? list.map((ev: unknown) => ({ file: basename(e.file), ...(ev as Record<string, unknown>) })) : [];
  });
  const velocityNotes = [...new Set(a.extras.flatMap((e) => (Array.isArray(e.extra.velocityNotes) ? e.extra.velocityNotes as string[] : [])))];
  const series = a.series;
  return {
    folder,
    frames: { used: a.used, skipped: a.skipped, reordered, waiting: a.waiting },
    columns: SERIES_COLUMNS,
    samples: series.rows,
    gaps: series.state.budget.gaps.map((g) => ({ from: new Date(g.from).toISOString(), to: new Date(g.to).toISOString(), bridged: g.bridged, median_cadence_s: g.medianCadenceS })),
    ...(velocityNotes.length > 0 && { velocity_notes: velocityNotes }),
    ...(footpoints.length > 0 && { footpoints }),
    ...(events.length > 0 && { events }),
    alerts: alertRecords(series.state.rules),
    alert_changes: series.alertChanges,
    // The braid after the last frame (segment, window with its word and triples, run) and where segments began (docs/braids.md).
    ...(a.braid?.last && {
      braid: { ...braidReportJson(a.braid.last), segments: a.braid.segments.map((g) => ({ ...g, time: new Date(g.time).toISOString() })) },
    }),
  };
}
