// One survey task: the frames of one chunk of one region through the batch analysis
// (replay/pooledBatch.ts: primed chunks, one per worker), written as a result with its provenance
// (version, settings, SHA-256 of every input). `survey run --task N` (an array task) and
// `survey run --local` both come here. A task whose result is complete does nothing; a task that
// fails records why, and is run again by the next `run` (resubmitting the array).

import { hostname } from 'node:os';
import { writeFile } from 'node:fs/promises';
import { InputError } from '../../core/inputError.js';
import type { ChunkJob } from '../analyseChunk.js';
import { primerStart } from '../chunkPriming.js';
import { analyseSpan } from '../pooledBatch.js';
import type { WorkerPool } from '../workerPool.js';
import { formatSlurmTime } from './slurmTime.js';
import { helicordVersion, sha256File } from './provenance.js';
import { problemText } from './regionFiles.js';
import type { CompleteResult, FailedResult, RegionIndex, SurveyPlan, TaskSummary } from './surveyFolder.js';
import type { FootpointReport } from '../../core/footpoints/footpointReport.js';
import { archiveSeries } from '../archiveSeries.js';
import type { BatchConfig } from '../batchConfig.js';
import type { ChunkOutput } from '../chunkSeams.js';
import { mergeChunks } from '../chunkSeams.js';
import { thresholdCrossings } from './surveyTable.js';
import { RESULT_FORMAT, isComplete, readRegionIndex, startedPath, writeResult } from './surveyFolder.js';
import type { SurveyTask } from './taskPlan.js';

/** The Slurm job variables a result keeps (where it ran). */
function slurmIds(): Record<string, string> | undefined {
  const keys = ['SLURM_JOB_ID', 'SLURM_ARRAY_JOB_ID', 'SLURM_ARRAY_TASK_ID', 'SLURM_JOB_NODELIST'];
  const ids = Object.fromEntries(keys.filter((k) => process.env[k] !== undefined).map((k) => [k, process.env[k]!]));
  return Object.keys(ids).length > 0 ? ids : undefined;
}

export function taskOf(plan: SurveyPlan, id: number, source: string): SurveyTask {
  const task = plan.tasks[id];
  if (!task || task.id !== id) {
    throw new InputError(source, 'task', plan.tasks.length === 0 ? `${id} is not a task: the plan has none` : `${id} is not a task: the plan has tasks 0 to ${plan.tasks.length - 1}`);
  }
  return task;
}

/** Computes a task (its result, not yet written). `tick` after each of its frames. */
export async function computeTask(dir: string, plan: SurveyPlan, task: SurveyTask, pool: WorkerPool, tick?: () => void): Promise<CompleteResult> {
  const started = new Date().toISOString();
  const region = plan.regions.find((r) => r.name === task.region);
  if (!region) throw new InputError(dir, 'task', `task ${task.id} names region ${task.region}, which the plan does not have`);
  const index = await readRegionIndex(dir, region.name);
  if (index.entries.length !== region.frameCount) throw new InputError(dir, 'regions', `the index of ${region.name} has ${index.entries.length} frames, the plan ${region.frameCount}`);
  const settings = region.settings;
  const jobs = index.entries.map((e, i): ChunkJob => ({ index: i, file: e.file, ...(e.files && { files: e.files }) }));
  const primerFrom = primerStart(index.entries, task.start, settings.analysis);
  if (primerFrom !== task.primerFrom) {
    throw new InputError(dir, 'task', `task ${task.id} needs frames from ${primerFrom} on to prime its analysis, the plan says ${task.primerFrom} (a plan made by another helicord version? plan again)`);
  }
  const inputs: { file: string; sha256: string }[] = [];
  for (const e of index.entries.slice(primerFrom, task.end)) {
    for (const file of e.files ?? [e.file]) inputs.push({ file, sha256: await sha256File(file).catch((err: unknown) => { throw new InputError(file, '(file)', problemText(err)); }) });
  }
  const chunks = await analyseSpan(pool, jobs, index.entries, task, {
    settings: settings.analysis, components: settings.components, ...(tick && { tick }),
  });
  return {
    format: RESULT_FORMAT, status: 'complete', task, summary: taskSummary(task, index.entries, chunks, settings),
    provenance: {
      version: helicordVersion(), settingsDigest: region.settingsDigest, settings, inputs,
      host: hostname(), started, finished: new Date().toISOString(), workers: pool.size, ...(slurmIds() && { slurm: slurmIds() }),
    },
    chunks,
  };
}

/** The task's own series, alert crossings and last footpoint table (surveyFolder.ts TaskSummary). */
function taskSummary(task: SurveyTask, entries: RegionIndex['entries'], chunks: readonly ChunkOutput[], settings: BatchConfig): TaskSummary {
  const merged = mergeChunks(chunks);
  const own = archiveSeries({ entries, skipped: [] }, merged.outcomes, settings);
  const wholeRegion = task.start === 0 && task.end === entries.length;
  const reports = merged.outcomes.map((o) => o.extra?.footpoints as FootpointReport | undefined).filter((r): r is FootpointReport => r?.footpoints !== undefined);
  const last = reports.at(-1);
  return {
    wholeRegion,
    ...(!wholeRegion && { note: `frames ${task.start}-${task.end - 1} of ${entries.length}: budget and alerts from zero at this task's first frame; the region's come from survey merge` }),
    framesUsed: own.used, skipped: own.skipped, series: own.series.rows,
    alertCrossings: thresholdCrossings(own.series.state.rules),
    ...(last && {
      footpoints: {
        time: last.time, count: last.count, events: reports.reduce((n, r) => n + r.events.length, 0),
        rows: last.footpoints!.map((f) => ({ id: f.id, polarity: f.polarity, flux: f.flux, spinBudget: f.spinBudget })),
      },
    }),
  };
}

/** Records a failure, unless the task has a complete result (a late signal never spoils one). */
export async function recordFailure(dir: string, task: SurveyTask, reason: string, timedOut: boolean): Promise<void> {
  if (await isComplete(dir, task.id)) return;
  const failed: FailedResult = {
    format: RESULT_FORMAT, status: 'failed', task, reason, timedOut, version: helicordVersion(), host: hostname(), time: new Date().toISOString(),
  };
  await writeResult(dir, failed);
}

/** What a task that was stopped after `elapsedS` says about it, given the plan's time limit. */
export function stopReason(signal: string, elapsedS: number, timeLimitS: number): { reason: string; timedOut: boolean } {
  const limit = formatSlurmTime(timeLimitS);
  // Slurm signals a task at its limit (checked about every 30 s); anything well before is another cause.
  if (elapsedS >= 0.95 * timeLimitS) return { reason: `timed out: stopped by ${signal} after ${Math.round(elapsedS)} s, the time limit of a task being ${limit}`, timedOut: true };
  return { reason: `stopped by ${signal} after ${Math.round(elapsedS)} s, before its time limit of ${limit} (cancelled, preempted or the node went down)`, timedOut: false };
}

/** Marks the start of a task (host, Slurm job, time), for a task that dies without a word. */
export async function markStarted(dir: string, task: SurveyTask): Promise<void> {
  await writeFile(startedPath(dir, task.id), JSON.stringify({ task: task.id, host: hostname(), pid: process.pid, time: new Date().toISOString(), ...(slurmIds() && { slurm: slurmIds() }) }) + '\n');
}
