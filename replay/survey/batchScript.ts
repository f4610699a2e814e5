// The Slurm batch script of a survey: one job array, one array task per survey task, each running
// `helicord survey run DIR --task $SLURM_ARRAY_TASK_ID` with the CPUs Slurm gave it. Submitted
// with `sbatch DIR/survey.sbatch`; a resubmission of the whole array (or of `--array=LIST`) reruns
// only the tasks without a complete result. Pure: options in, text out.

import { arraySpec } from './taskPlan.js';
import { batchAllocatorExports } from '../batchAllocator.js';

export interface BatchScriptOptions {
  /** The survey folder, absolute. */
  readonly surveyDir: string;
  /** Task ids of the array. */
  readonly tasks: readonly number[];
  readonly jobName: string;
  /** Time limit per task, as Slurm writes it. */
  readonly time: string;
  readonly cpusPerTask: number;
  /** Memory per task, MB (the cluster's default when absent). */
  readonly memMB?: number;
  readonly partition?: string;
  readonly account?: string;
  /** At most this many tasks at once (%N of --array). */
  readonly maxParallel?: number;
  /** How to start helicord on the nodes: a command line (node and the launcher, absolute). */
  readonly helicord: string;
}

/** A word for the shell: single-quoted unless it is plain. */
export function shellWord(s: string): string {
  return /^[A-Za-z0-9_./:=@%+-]+$/.test(s) ? s : `'${s.replace(/'/g, `'\\''`)}'`;
}

export function batchScript(o: BatchScriptOptions): string {
  const dir = o.surveyDir;
  const lines = [
    '#!/bin/bash',
    `#SBATCH --job-name=${o.jobName}`,
    `#SBATCH --array=${arraySpec(o.tasks)}${o.maxParallel !== undefined ? `%${o.maxParallel}` : ''}`,
    '#SBATCH --ntasks=1',
    `#SBATCH --cpus-per-task=${o.cpusPerTask}`,
    `#SBATCH --time=${o.time}`,
    ...(o.memMB !== undefined ? [`#SBATCH --mem=${o.memMB}M`] : []),
    ...(o.partition !== undefined ? [`#SBATCH --partition=${o.partition}`] : []),
    ...(o.account !== undefined ? [`#SBATCH --account=${o.account}`] : []),
    `#SBATCH --output=${dir}/logs/task-%a-job-%A.out`,
    '#',
    '# A helicord survey: each array task analyses one task of the plan (survey.json) and writes',
    '# results/task-NNNNN.json atomically. Submit again after a failure (the whole array, or',
    '# --array=LIST as `helicord survey merge` prints it): a task whose result is complete does',
    '# nothing. Then: helicord survey merge ' + shellWord(dir),
    'set -euo pipefail',
    "# glibc's allocator as helicord's launcher sets it for batch runs (less peak memory: replay/batchAllocator.ts).",
    batchAllocatorExports(),
    `exec ${o.helicord} survey run ${shellWord(dir)} --task "$SLURM_ARRAY_TASK_ID" --workers "\${SLURM_CPUS_PER_TASK:-1}"`,
    '',
  ];
  return lines.join('\n');
}
