// `helicord survey run DIR --task N` (what each Slurm array task calls; N from
// SLURM_ARRAY_TASK_ID when absent) and `helicord survey run DIR --local` (every task not yet
// complete, on this machine, with the progress bar). Both compute tasks with surveyTask.ts.
//
// Time limits: under Slurm the scheduler stops a task at its limit with SIGTERM; the task then
// records "timed out" (or, before its limit, "stopped": scancel, preemption) and exits. Locally
// each task gets the plan's limit too: a task past it has its worker stopped and is recorded as
// timed out; the other tasks go on.

import { availableParallelism } from 'node:os';
import { InputError } from '../../core/inputError.js';
import type { ProgressReport } from '../progressReport.js';
import { progressReport } from '../progressReport.js';
import { startWorkerPool } from '../workerPool.js';
import { formatSlurmTime } from './slurmTime.js';
import { problemText } from './regionFiles.js';
import type { CompleteResult } from './surveyFolder.js';
import { isComplete, readPlan, writeResult } from './surveyFolder.js';
import { computeTask, markStarted, recordFailure, stopReason, taskOf } from './surveyTask.js';
import type { SurveyTask } from './taskPlan.js';

export type TaskOutcome = 'done' | 'skipped' | 'failed';

const describe = (t: SurveyTask) => `task ${t.id} (region ${t.region}, frames ${t.start}-${t.end - 1})`;

/** Runs one task in this process (an array task). Returns what became of it. */
export async function runTask(dir: string, id: number, options: { workers?: number; progress?: NodeJS.WritableStream } = {}): Promise<TaskOutcome> {
  const progress = progressReport(options.progress ?? process.stderr);
  const plan = await readPlan(dir);
  const task = taskOf(plan, id, dir);
  if (await isComplete(dir, id)) {
    progress.line(`${describe(task)}: its result is complete already; nothing to do`);
    return 'skipped';
  }
  await markStarted(dir, task);
  const t0 = Date.now();
  let writing: Promise<void> | undefined;
  const onSignal = (signal: NodeJS.Signals) => {
    const stop = async () => {
      if (writing) await writing.catch(() => undefined);
      else {
        const { reason, timedOut } = stopReason(signal, (Date.now() - t0) / 1000, plan.timeLimitS);
        await recordFailure(dir, task, reason, timedOut);
        progress.line(`${describe(task)}: ${reason}`);
      }
    };
    stop().finally(() => process.exit(signal === 'SIGINT' ? 130 : 143));
  };
  process.on('SIGTERM', onSignal);
  process.on('SIGINT', onSignal);
  const pool = startWorkerPool(Math.max(1, Math.min(options.workers ?? availableParallelism(), task.end - task.start)));
  try {
    progress.start('analysing', task.end - task.start);
    const result = await computeTask(dir, plan, task, pool, () => progress.tick());
    progress.stop();
    writing = writeResult(dir, result);
    await writing;
    progress.line(`${describe(task)}: done in ${Math.round((Date.now() - t0) / 1000)} s`);
    return 'done';
  } catch (e) {
    progress.stop();
    const reason = problemText(e);
    await recordFailure(dir, task, reason, false);
    progress.line(`${describe(task)}: failed: ${reason}`);
    return 'failed';
  } finally {
    await pool.close();
    process.off('SIGTERM', onSignal);
    process.off('SIGINT', onSignal);
  }
}

export interface LocalRunSummary {
  readonly done: number;
  readonly skipped: number;
  readonly failed: number;
}

/** One task locally, within the time limit, on a pool of its own. */
async function runLocalTask(dir: string, plan: Awaited<ReturnType<typeof readPlan>>, task: SurveyTask, workers: number, progress: ProgressReport, timeLimitS: number): Promise<TaskOutcome> {
  await markStarted(dir, task);
  const pool = startWorkerPool(Math.max(1, Math.min(workers, task.end - task.start)));
  let timer: NodeJS.Timeout | undefined;
  const t0 = Date.now();
  try {
    const timeout = new Promise<'timeout'>((resolve) => { timer = setTimeout(() => resolve('timeout'), timeLimitS * 1000); });
    const outcome = await Promise.race([
      computeTask(dir, plan, task, pool, () => progress.tick()).then((r) => ({ r }), (e: unknown) => ({ e })),
      timeout,
    ]);
    if (outcome === 'timeout') {
      const reason = `timed out: stopped after ${Math.round((Date.now() - t0) / 1000)} s, the time limit of a task being ${formatSlurmTime(timeLimitS)}`;
      await recordFailure(dir, task, reason, true);
      progress.line(`${describe(task)}: ${reason}`);
      return 'failed';
    }
    if ('e' in outcome) {
      const reason = problemText(outcome.e);
      await recordFailure(dir, task, reason, false);
      progress.line(`${describe(task)}: failed: ${reason}`);
      return 'failed';
    }
    await writeResult(dir, outcome.r as CompleteResult);
    return 'done';
  } finally {
    clearTimeout(timer);
    await pool.close();
  }
}

/** Every task without a complete result, on this machine, `workers` threads in all. */
export async function runLocal(dir: string, options: { workers?: number; progress?: NodeJS.WritableStream; timeLimitS?: number } = {}): Promise<LocalRunSummary> {
  const progress = progressReport(options.progress ?? process.stderr);
  const plan = await readPlan(dir);
  const workers = options.workers ?? availableParallelism();
  if (!(Number.isInteger(workers) && workers >= 1)) throw new InputError('survey run', 'workers', `must be a positive integer, got ${workers}`);
  const todo: SurveyTask[] = [];
  for (const t of plan.tasks) if (!(await isComplete(dir, t.id))) todo.push(t);
  const skipped = plan.tasks.length - todo.length;
  if (skipped > 0) progress.line(`${skipped} of ${plan.tasks.length} task(s) have a complete result already`);
  // As many tasks at once as there are workers, each on an equal share of them.
  const slots = Math.max(1, Math.min(workers, todo.length));
  const share = Math.max(1, Math.floor(workers / slots));
  const counts = { done: 0, failed: 0 };
  progress.start('analysing', todo.reduce((n, t) => n + t.end - t.start, 0));
  let next = 0;
  await Promise.all(Array.from({ length: slots }, async () => {
    while (next < todo.length) {
      const task = todo[next++];
      counts[await runLocalTask(dir, plan, task, share, progress, options.timeLimitS ?? plan.timeLimitS) === 'done' ? 'done' : 'failed']++;
    }
  }));
  progress.stop();
  progress.line(`ran ${todo.length} task(s): ${counts.done} complete, ${counts.failed} failed`);
  return { ...counts, skipped };
}
