// The survey folder and what it holds:
//
//   survey.json              the plan: regions (settings, frame counts, problems), tasks (frames, primer), time limit
//   survey.sbatch            the Slurm batch script (a job array, one array task per task)
//   regions/NAME.index.json  a region's ordered frames (file, time, grid) and the files set aside
//   results/task-NNNNN.json  a task's result, written atomically: complete, or failed with the reason
//   results/task-NNNNN.started   written when a task starts (host, job, time)
//   logs/                    Slurm's output of each array task
//   merged/                  what `survey merge` writes: survey.csv, survey.json, regions/NAME.csv|json
//
// Results are read back exactly (resultCodec.ts). Results are written temp + fsync + rename +
// fsync of the folder, so a task killed at any moment leaves its result whole or absent.

import { open, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { InputError } from '../../core/inputError.js';
import type { ScannedFrame, SkippedFile } from '../archiveOrder.js';
import { writeFileAtomic } from '../atomicFile.js';
import type { BatchConfig } from '../batchConfig.js';
import type { ChunkOutput } from '../chunkSeams.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import type { ThresholdCrossing } from './surveyTable.js';
import { fileProblem } from '../fileProblem.js';
import { decodeResult, encodeResult } from './resultCodec.js';
import type { SurveyTask } from './taskPlan.js';

export const PLAN_FORMAT = 'helicord survey plan 1';
export const RESULT_FORMAT = 'helicord survey task result 1';

export interface SurveyRegion {
  readonly name: string;
  /** The folder or pattern, as resolved (absolute). */
  readonly frames: string;
  /** The region's config file, when the manifest gave one. */
  readonly config?: string;
  /** The settings its tasks use (the config file's, the command line's components over them). */
  readonly settings: BatchConfig;
  /** SHA-256 of the settings in canonical JSON. */
  readonly settingsDigest: string;
  /** Usable frames (in the region's index). */
  readonly frameCount: number;
  /** Files set aside by the plan's scan. */
  readonly skippedCount: number;
  /** Why the region has no tasks (a missing or empty folder, no usable frame, a bad config). */
  readonly problem?: string;
}

export interface SurveyPlan {
  readonly format: typeof PLAN_FORMAT;
  /** helicord version that made the plan. */
  readonly version: string;
  readonly created: string;
  readonly manifest: string;
  /** Time limit of one task, s (the batch script's --time; `run --local` keeps it too). */
  readonly timeLimitS: number;
  readonly chunkFrames: number;
  readonly regions: readonly SurveyRegion[];
  readonly tasks: readonly SurveyTask[];
}

export interface RegionIndex {
  readonly region: string;
  readonly entries: readonly ScannedFrame[];
  readonly skipped: readonly SkippedFile[];
  readonly reordered: readonly string[];
}

export interface TaskProvenance {
  readonly version: string;
  readonly settingsDigest: string;
  readonly settings: BatchConfig;
  /** Every file the task read (its primer frames too), with its SHA-256. */
  readonly inputs: readonly { readonly file: string; readonly sha256: string }[];
  readonly host: string;
  readonly started: string;
  readonly finished: string;
  readonly workers: number;
  /** SLURM_JOB_ID, SLURM_ARRAY_JOB_ID, SLURM_ARRAY_TASK_ID when run by Slurm. */
  readonly slurm?: Record<string, string>;
}

/**
 * What a task found on its own frames, readable without the merge: its series (budget and alerts
 * from zero at its first frame: the region's own when the task covers the whole region, otherwise
 * the merge's are the region's), the alert crossings, and the footpoints of its last frame.
 */
export interface TaskSummary {
  readonly wholeRegion: boolean;
  readonly note?: string;
  readonly framesUsed: number;
  readonly skipped: readonly SkippedFile[];
  readonly series: readonly SeriesRow[];
  readonly alertCrossings: readonly ThresholdCrossing[];
  /** The footpoint table of the task's last frame with footpoints (ids of this task's tracking). */
  readonly footpoints?: {
    readonly time: number;
    readonly count: number;
    readonly rows: readonly { id: number; polarity: 1 | -1; flux: number; spinBudget: number | null }[];
    /** Events (appeared, vanished, merged, split) over the task's frames. */
    readonly events: number;
  };
}

export interface CompleteResult {
  readonly format: typeof RESULT_FORMAT;
  readonly status: 'complete';
  readonly task: SurveyTask;
  readonly provenance: TaskProvenance;
  readonly summary: TaskSummary;
  /** The task's chunks, raw (outcomes of its own frames, primer tables), in time order. */
  readonly chunks: readonly ChunkOutput[];
}

export interface FailedResult {
  readonly format: typeof RESULT_FORMAT;
  readonly status: 'failed';
  readonly task: SurveyTask;
  /** Why, in words ("timed out after 62 s: the time limit is 00:01:00"). */
  readonly reason: string;
  readonly timedOut: boolean;
  readonly version: string;
  readonly host: string;
  readonly time: string;
}

export type TaskResult = CompleteResult | FailedResult;

export const planPath = (dir: string) => join(dir, 'survey.json');
export const scriptPath = (dir: string) => join(dir, 'survey.sbatch');
export const regionIndexPath = (dir: string, region: string) => join(dir, 'regions', `${region}.index.json`);
export const resultPath = (dir: string, id: number) => join(dir, 'results', `task-${String(id).padStart(5, '0')}.json`);
export const startedPath = (dir: string, id: number) => join(dir, 'results', `task-${String(id).padStart(5, '0')}.started`);
export const mergedDir = (dir: string) => join(dir, 'merged');

async function readText(path: string, what: string): Promise<string> {
  try {
    return await readFile(path, 'utf8');
  } catch (e) {
    throw new InputError(path, what, fileProblem(e));
  }
}

export async function readPlan(dir: string): Promise<SurveyPlan> {
  const text = await readText(planPath(dir), '(file)');
  let plan: SurveyPlan;
  try {
    plan = JSON.parse(text) as SurveyPlan;
  } catch (e) {
    throw new InputError(planPath(dir), '(file)', `cannot be read as JSON: ${(e as Error).message}`);
  }
  if (plan.format !== PLAN_FORMAT) throw new InputError(planPath(dir), 'format', `is not a helicord survey plan (format ${JSON.stringify(plan.format)})`);
  return plan;
}

export async function readRegionIndex(dir: string, region: string): Promise<RegionIndex> {
  return JSON.parse(await readText(regionIndexPath(dir, region), '(file)')) as RegionIndex;
}

/** A task's result, or undefined when it has none (an unreadable one is a failure to redo). */
export async function readResult(dir: string, id: number): Promise<TaskResult | undefined> {
  let text: string;
  try {
    text = await readFile(resultPath(dir, id), 'utf8');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return undefined;
    throw new InputError(resultPath(dir, id), '(file)', fileProblem(e));
  }
  const r = decodeResult(text) as TaskResult;
  if (r.format !== RESULT_FORMAT) throw new InputError(resultPath(dir, id), 'format', `is not a helicord survey task result (format ${JSON.stringify(r.format)})`);
  return r;
}

/**
 * True when the task has a complete result. Results start with their format and status (and are
 * written whole or not at all), so the first bytes tell without reading the chunks.
 */
export async function isComplete(dir: string, id: number): Promise<boolean> {
  let fh;
  try {
    fh = await open(resultPath(dir, id), 'r');
    const head = Buffer.alloc(128);
    const { bytesRead } = await fh.read(head, 0, head.length, 0);
    return head.subarray(0, bytesRead).toString('utf8').startsWith(`{"format":${JSON.stringify(RESULT_FORMAT)},"status":"complete"`);
  } catch {
    return false;
  } finally {
    await fh?.close();
  }
}

export function writeResult(dir: string, result: TaskResult): Promise<void> {
  return writeFileAtomic(resultPath(dir, result.task.id), encodeResult(result));
}

export function writeJson(path: string, value: unknown): Promise<void> {
  return writeFileAtomic(path, JSON.stringify(value, null, 2) + '\n');
}
