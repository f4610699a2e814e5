// The command-line faces of `helicord survey plan|run|merge` (replay/survey/), each step with its
// own table of options, read strictly like every command.

import type { CommandSpec, ParsedArgs } from './args.js';
import { COMPONENT_OPTIONS, componentSettingsFrom } from './componentOptions.js';
import { planSurvey } from '../../replay/survey/surveyPlan.js';
import { runLocal, runTask } from '../../replay/survey/surveyRun.js';
import { mergeSurvey } from '../../replay/survey/surveyMerge.js';
import { parseSlurmTime } from '../../replay/survey/slurmTime.js';

export const SURVEY_PLAN_SPEC: CommandSpec = {
  name: 'survey plan',
  usage: ['survey plan MANIFEST --out DIR [--config FILE] [--chunk-frames N] [--time LIMIT] [--cpus-per-task N] [--mem MB] [--partition NAME] [--account NAME] [--max-parallel N]'],
  summary: 'plan a survey of many regions: the task list and a Slurm batch script',
  description: 'Read a manifest (CSV: region,frames[,config], one line per region; frames a folder or a file pattern) and write '
    + 'the survey folder DIR: the tasks (one per region, a long region cut into chunks of at most --chunk-frames frames, each '
    + 'primed with the frames before it that the tracking needs), each region\'s frames in time order, the settings, and '
    + 'survey.sbatch, a Slurm job array with one array task per task. A region whose folder is missing or empty, or whose frames '
    + 'are all unusable, gets no task and keeps its reason for the survey table.',
  positionals: { min: 1, max: 1, what: 'the manifest (helicord survey plan MANIFEST --out DIR)' },
  options: {
    out: { kind: 'string', value: 'DIR', help: 'the survey folder written (needed; a new folder)' },
    config: { kind: 'string', value: 'FILE', help: 'a config file for every region without a config of its own in the manifest (README, "A complete config file")' },
    'chunk-frames': { kind: 'integer', value: 'N', min: 1, default: 250, help: 'the most frames one task analyses (a longer region is cut into chunks)' },
    time: { kind: 'string', value: 'LIMIT', default: '02:00:00', help: 'time limit of one task, as Slurm writes it (MM, HH:MM:SS, D-HH:MM ...); run --local keeps it too' },
    'cpus-per-task': { kind: 'integer', value: 'N', min: 1, default: 1, help: 'CPUs per array task (its worker threads)' },
    mem: { kind: 'integer', value: 'MB', min: 1, defaultText: 'the cluster\'s default', help: 'memory per array task, MB' },
    partition: { kind: 'string', value: 'NAME', help: 'the Slurm partition' },
    account: { kind: 'string', value: 'NAME', help: 'the Slurm account to charge' },
    'max-parallel': { kind: 'integer', value: 'N', min: 1, defaultText: 'no limit', help: 'at most N array tasks at once (--array=...%N)' },
    'job-name': { kind: 'string', value: 'NAME', default: 'helicord-survey', help: 'the Slurm job name' },
    launcher: { kind: 'string', value: 'COMMAND', defaultText: 'this node and this helicord', help: 'how the cluster\'s nodes start helicord (e.g. "npx helicord")' },
    workers: { kind: 'integer', value: 'N', min: 1, defaultText: 'every core', help: 'worker threads reading the frames while planning' },
    ...COMPONENT_OPTIONS,
  },
};

export const SURVEY_RUN_SPEC: CommandSpec = {
  name: 'survey run',
  usage: ['survey run DIR --task N [--workers N]', 'survey run DIR --local [--workers N]'],
  summary: 'run one task of a survey (a Slurm array task), or all of them here',
  description: 'Run task N of the survey in DIR (N from SLURM_ARRAY_TASK_ID when --task is absent: what each array task of '
    + 'survey.sbatch does) and write its result atomically, with its provenance. A task whose result is complete does nothing, '
    + 'so submitting the array again after a failure reruns only what failed. --local runs every task without a complete result '
    + 'on this machine with the worker pool, each within the plan\'s time limit.',
  positionals: { min: 1, max: 1, what: 'the survey folder (helicord survey run DIR --task N)' },
  options: {
    task: { kind: 'integer', value: 'N', min: 0, defaultText: '$SLURM_ARRAY_TASK_ID', help: 'the task to run' },
    local: { kind: 'boolean', help: 'run every task not yet complete here, with a progress bar' },
    workers: { kind: 'integer', value: 'N', min: 1, defaultText: 'every core', help: 'worker threads' },
  },
};

export const SURVEY_MERGE_SPEC: CommandSpec = {
  name: 'survey merge',
  usage: ['survey merge DIR [--out DIR/merged]'],
  summary: 'put the task results of a survey together: one table per region, one survey table',
  description: 'Combine the task results of the survey in DIR into one series per region (regions/NAME.csv and .json; chunks '
    + 'stitched at their seams, every frame counted once) and the survey table (survey.csv, survey.json: one row per region with '
    + 'frames used, gaps, peak |dH/dt| and its time, final budget with 1-sigma, spin and orbit shares, Phi, H/Phi^2 and the '
    + 'thresholds crossed). Results made by other settings or another version are refused; a region with a failed or missing '
    + 'task gets the reason in its row, and the tasks to run again are printed.',
  positionals: { min: 1, max: 1, what: 'the survey folder (helicord survey merge DIR)' },
  options: {
    out: { kind: 'string', value: 'DIR', defaultText: 'DIR/merged', help: 'the folder the tables are written to' },
  },
};

export const SURVEY_SPEC: CommandSpec = {
  name: 'survey',
  usage: [...SURVEY_PLAN_SPEC.usage, ...SURVEY_RUN_SPEC.usage, ...SURVEY_MERGE_SPEC.usage],
  summary: 'a survey of many regions, on a Slurm cluster or here: plan, run, merge',
  description: 'Three steps over one survey folder: plan (from a manifest), run (each task, as a Slurm array task, or --local), '
    + 'merge (the tables). `helicord survey STEP --help` lists a step\'s options; docs/survey.md has a worked example.',
  positionals: { min: 0, max: 0, what: 'a step: plan, run or merge' },
  options: {},
};

export async function surveyPlanCli(args: ParsedArgs, _out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  const out = args.string('out');
  if (out === undefined) throw new Error('--out DIR is needed (the survey folder to write)');
  const config = args.string('config'), partition = args.string('partition'), account = args.string('account'), launcher = args.string('launcher');
  const mem = args.number('mem'), maxParallel = args.number('max-parallel'), workers = args.number('workers');
  let timeLimitS: number;
  try {
    timeLimitS = parseSlurmTime(args.string('time')!, 'option --time');
  } catch (e) {
    throw new Error(`option --time: ${(e as { problem?: string }).problem ?? (e as Error).message}`);
  }
  await planSurvey({
    manifest: args.positional[0], out, components: componentSettingsFrom(args), progress: err,
    chunkFrames: args.number('chunk-frames')!, timeLimitS, cpusPerTask: args.number('cpus-per-task')!, jobName: args.string('job-name')!,
    ...(config !== undefined && { config }), ...(partition !== undefined && { partition }), ...(account !== undefined && { account }),
    ...(launcher !== undefined && { helicord: launcher }), ...(mem !== undefined && { memMB: mem }),
    ...(maxParallel !== undefined && { maxParallel }), ...(workers !== undefined && { workers }),
  });
  return 0;
}

export async function surveyRunCli(args: ParsedArgs, _out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  const dir = args.positional[0];
  const workers = args.number('workers');
  if (args.boolean('local')) {
    if (args.given('task')) throw new Error('give either --task N or --local, not both');
    const r = await runLocal(dir, { progress: err, ...(workers !== undefined && { workers }) });
    return r.failed > 0 ? 1 : 0;
  }
  let task = args.number('task');
  if (task === undefined) {
    const env = process.env.SLURM_ARRAY_TASK_ID;
    if (env === undefined) throw new Error('--task N is needed (or --local), unless SLURM_ARRAY_TASK_ID is set (in a Slurm array task)');
    if (!/^\d+$/.test(env)) throw new Error(`SLURM_ARRAY_TASK_ID is "${env}", not a task number`);
    task = Number(env);
  }
  const outcome = await runTask(dir, task, { progress: err, ...(workers !== undefined && { workers }) });
  return outcome === 'failed' ? 1 : 0;
}

export async function surveyMergeCli(args: ParsedArgs, _out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  const outDir = args.string('out');
  const r = await mergeSurvey(args.positional[0], { progress: err, ...(outDir !== undefined && { out: outDir }) });
  // Regions without data stay so; tasks to run again are work left.
  return r.rerun.length > 0 ? 1 : 0;
}

export const SURVEY_STEPS = {
  plan: { spec: SURVEY_PLAN_SPEC, run: surveyPlanCli },
  run: { spec: SURVEY_RUN_SPEC, run: surveyRunCli },
  merge: { spec: SURVEY_MERGE_SPEC, run: surveyMergeCli },
} as const;
