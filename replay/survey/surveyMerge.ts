// `helicord survey merge DIR [--out DIR/merged]`: the task results put together. Per region, its
// tasks' chunks are stitched in time order by replay/chunkSeams.ts (footpoint ids, windings and
// spin budgets carried across each seam; every frame counted once) and accumulated by
// replay/archiveSeries.ts exactly as `process` does, giving regions/NAME.csv and NAME.json; the
// survey table (surveyTable.ts) goes to survey.csv and survey.json. Results made by other
// versions or settings are refused (nothing is written); a region with a task that failed or
// never ran gets a row with the reason, and the other regions are merged as usual. Results are
// read twice, their stamps (version, settings) first, then region by region, so that memory holds
// one region's results at a time however large the survey.

import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { InputError } from '../../core/inputError.js';
import { seriesCsv } from '../../core/seriesColumns.js';
import { writeFileAtomic } from '../atomicFile.js';
import { archiveJson, archiveSeries, jsonValue } from '../archiveSeries.js';
import { mergeChunks } from '../chunkSeams.js';
import { progressReport } from '../progressReport.js';
import type { ResultStamp } from './mergeChecks.js';
import { changedInput, mixedResults, regionCoverage } from './mergeChecks.js';
import { helicordVersion } from './provenance.js';
import { problemText } from './regionFiles.js';
import type { CompleteResult, FailedResult, SurveyPlan, TaskResult } from './surveyFolder.js';
import { mergedDir, readPlan, readRegionIndex, readResult, startedPath } from './surveyFolder.js';
import type { SurveyRow } from './surveyTable.js';
import { SURVEY_COLUMNS, problemRow, regionRow, surveyCsv } from './surveyTable.js';
import { arraySpec } from './taskPlan.js';

export interface MergeSummary {
  readonly rows: SurveyRow[];
  /** Tasks without a complete result (to submit again). */
  readonly rerun: number[];
  readonly out: string;
}

/** What the first reading of a task's result keeps: the stamp of a complete one, a failure, nothing, or why it cannot be read. */
type ResultState = { status: 'complete'; stamp: ResultStamp } | FailedResult | undefined | Error;

/** Why a task has no complete result, in words. */
async function missingReason(dir: string, id: number, result: ResultState): Promise<string> {
  if (result instanceof Error) return `task ${id}: its result cannot be read (${problemText(result)})`;
  if (result?.status === 'failed') return `task ${id}: ${result.reason}`;
  try {
    const started = JSON.parse(await readFile(startedPath(dir, id), 'utf8')) as { host?: string; time?: string; slurm?: Record<string, string> };
    const job = started.slurm?.SLURM_ARRAY_JOB_ID ?? started.slurm?.SLURM_JOB_ID;
    return `task ${id}: started ${started.time ?? '?'} on ${started.host ?? '?'}${job ? ` (job ${job})` : ''} and left no result (killed, out of memory, or still running)`;
  } catch {
    return `task ${id}: not run yet`;
  }
}

/** A task's result as the first reading keeps it (the chunks of a survey do not all fit in memory at once). */
async function resultState(dir: string, id: number): Promise<ResultState> {
  let r: TaskResult | undefined;
  try {
    r = await readResult(dir, id);
  } catch (e) {
    return e as Error;
  }
  if (r?.status !== 'complete') return r;
  return { status: 'complete', stamp: { task: r.task, provenance: { version: r.provenance.version, settingsDigest: r.provenance.settingsDigest } } };
}

export async function mergeSurvey(dir: string, options: { out?: string; progress?: NodeJS.WritableStream } = {}): Promise<MergeSummary> {
  const progress = progressReport(options.progress ?? process.stderr);
  const plan: SurveyPlan = await readPlan(dir);
  const out = options.out ?? mergedDir(dir);
  // First every result's stamp (version, settings): a survey of mixed results is refused whole.
  const states = new Map<number, ResultState>();
  for (const t of plan.tasks) states.set(t.id, await resultState(dir, t.id));
  const stamps = [...states.values()].flatMap((r) => (r !== undefined && !(r instanceof Error) && r.status === 'complete' ? [r.stamp] : []));
  const mixed = mixedResults(plan, stamps);
  if (mixed) throw new InputError(dir, 'results', `cannot be merged: ${mixed}`);

  // Then region by region, its results read again whole.
  const rows: SurveyRow[] = [];
  const rerun: number[] = [];
  const versions = new Set<string>();
  for (const region of plan.regions) {
    const tasks = plan.tasks.filter((t) => t.region === region.name);
    if (region.problem !== undefined) { rows.push(problemRow(region.name, 'no-data', region.problem, 0, region.skippedCount)); continue; }
    const own: CompleteResult[] = [];
    const missing: { id: number; state: ResultState }[] = [];
    for (const t of tasks) {
      const state = states.get(t.id);
      if (state === undefined || state instanceof Error || state.status !== 'complete') { missing.push({ id: t.id, state }); continue; }
      const r = await readResult(dir, t.id).catch((e: unknown) => e as Error);
      const same = r !== undefined && !(r instanceof Error) && r.status === 'complete'
        && r.provenance.version === state.stamp.provenance.version && r.provenance.settingsDigest === state.stamp.provenance.settingsDigest;
      if (same) own.push(r);
      else missing.push({ id: t.id, state: r instanceof Error ? r : new Error('it changed while the merge read it (a task still running?)') });
    }
    if (missing.length > 0) {
      rerun.push(...missing.map((m) => m.id));
      const reasons = await Promise.all(missing.map((m) => missingReason(dir, m.id, m.state)));
      rows.push(problemRow(region.name, 'incomplete', reasons.join('; '), region.frameCount, null));
      continue;
    }
    const refused = regionCoverage(region.frameCount, own) ?? changedInput(own);
    if (refused) {
      rerun.push(...tasks.map((t) => t.id));
      rows.push(problemRow(region.name, 'incomplete', refused, region.frameCount, null));
      continue;
    }
    own.forEach((r) => versions.add(r.provenance.version));
    const index = await readRegionIndex(dir, region.name);
    const merged = mergeChunks(own.flatMap((r) => r.chunks));
    const series = archiveSeries(index, merged.outcomes, region.settings);
    rows.push(regionRow(region.name, region.frameCount, series));
    await writeFileAtomic(join(out, 'regions', `${region.name}.csv`), seriesCsv(series.series.rows));
    const doc = {
      region: region.name, ...archiveJson(region.frames, index.reordered, series),
      provenance: {
        version: own[0].provenance.version, settings: region.settings, settings_digest: region.settingsDigest,
        tasks: own.map((r) => ({ task: r.task.id, frames: [r.task.start, r.task.end - 1], host: r.provenance.host, started: r.provenance.started, finished: r.provenance.finished, ...(r.provenance.slurm && { slurm: r.provenance.slurm }) })),
        inputs: [...new Map(own.flatMap((r) => r.provenance.inputs.map((i) => [i.file, i.sha256] as const))).entries()].map(([file, sha256]) => ({ file, sha256 })),
      },
      ...(merged.unmatched > 0 && { seam_note: `${merged.unmatched} footpoint(s) at task seams were not found in the chunk before and took new ids` }),
    };
    await writeFileAtomic(join(out, 'regions', `${region.name}.json`), JSON.stringify(doc, jsonValue, 2));
  }
  const table = {
    survey: dir, planned: plan.created, merged: new Date().toISOString(), version: [...versions][0] ?? helicordVersion(),
    columns: SURVEY_COLUMNS, regions: rows, ...(rerun.length > 0 && { rerun: arraySpec(rerun) }),
  };
  await writeFileAtomic(join(out, 'survey.csv'), surveyCsv(rows));
  await writeFileAtomic(join(out, 'survey.json'), JSON.stringify(table, jsonValue, 2));
  const ok = rows.filter((r) => r.status === 'ok').length;
  progress.line(`merged ${ok} of ${rows.length} region(s) into ${out} (survey.csv, survey.json, regions/)`);
  for (const r of rows) if (r.status !== 'ok') progress.line(`  region ${r.region} (${r.status}): ${r.problem}`);
  if (rerun.length > 0) progress.line(`  to run the missing tasks again: sbatch --array=${arraySpec(rerun)} ${join(dir, 'survey.sbatch')}   (or: helicord survey run ${dir} --local)`);
  return { rows, rerun, out };
}
