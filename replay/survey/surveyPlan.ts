// `helicord survey plan MANIFEST --out DIR`: reads the manifest, lists and scans each region's
// frames through the worker pool (each file read and described, put in time order, as `process`
// does), and writes the survey folder (surveyFolder.ts): the plan with one task per region (long
// regions cut into chunks, taskPlan.ts), each region's ordered frames, and the Slurm batch script.
// A region whose folder is missing or empty, whose frames are all unusable or whose config file is
// refused gets no task and keeps its reason, which the merge puts in the survey table; the other
// regions are planned as usual.

import { availableParallelism } from 'node:os';
import { existsSync } from 'node:fs';
import { mkdir, readFile, writeFile, chmod } from 'node:fs/promises';
import { dirname, isAbsolute, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { FrameAssemblySettings } from '../../core/frameAssembly/assembleFrame.js';
import { mergeAssemblySettings } from '../../core/frameAssembly/componentLayouts.js';
import { InputError } from '../../core/inputError.js';
import { indexScans } from '../archiveSource.js';
import { primerStart } from '../chunkPriming.js';
import type { BatchConfig } from '../batchConfig.js';
import { readBatchConfig } from '../batchConfig.js';
import { fileProblem } from '../fileProblem.js';
import { scanFiles } from '../pooledBatch.js';
import { progressReport } from '../progressReport.js';
import { startWorkerPool } from '../workerPool.js';
import { batchScript, shellWord } from './batchScript.js';
import { parseManifest } from './manifest.js';
import { canonicalJson, helicordVersion, sha256Text } from './provenance.js';
import { problemText, regionFiles } from './regionFiles.js';
import { formatSlurmTime } from './slurmTime.js';
import type { RegionIndex, SurveyPlan, SurveyRegion } from './surveyFolder.js';
import { PLAN_FORMAT, planPath, regionIndexPath, scriptPath, writeJson } from './surveyFolder.js';
import { planTasks } from './taskPlan.js';

export interface PlanArgs {
  readonly manifest: string;
  readonly out: string;
  /** The survey's config file (a region's own config replaces it). */
  readonly config?: string;
  /** Component options of the command line, over every region's config. */
  readonly components?: FrameAssemblySettings;
  /** Longest chunk of one task, frames. */
  readonly chunkFrames: number;
  readonly timeLimitS: number;
  readonly cpusPerTask: number;
  readonly memMB?: number;
  readonly partition?: string;
  readonly account?: string;
  readonly maxParallel?: number;
  readonly jobName?: string;
  /** How the nodes start helicord; this node and this launcher by default. */
  readonly helicord?: string;
  readonly workers?: number;
  readonly progress?: NodeJS.WritableStream;
}

/** `node /abs/bin/helicord.js` for this installation (from the sources or from dist/). */
export function defaultLauncher(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (;;) {
    const bin = join(dir, 'bin', 'helicord.js');
    if (existsSync(bin)) return `${shellWord(process.execPath)} ${shellWord(bin)}`;
    const up = dirname(dir);
    if (up === dir) throw new Error('bin/helicord.js was not found above ' + fileURLToPath(import.meta.url));
    dir = up;
  }
}

export async function planSurvey(args: PlanArgs): Promise<SurveyPlan> {
  const progress = progressReport(args.progress ?? process.stderr);
  const out = resolve(args.out);
  if (existsSync(planPath(out))) {
    throw new InputError(planPath(out), '(file)', 'already holds a survey plan: its results belong to it; plan into a new folder');
  }
  let text: string;
  try {
    text = await readFile(args.manifest, 'utf8');
  } catch (e) {
    throw new InputError(args.manifest, '(file)', fileProblem(e));
  }
  const rows = parseManifest(text, args.manifest);
  const base = dirname(resolve(args.manifest));
  const at = (p: string) => (isAbsolute(p) ? p : join(base, p));
  const surveyConfig = await readBatchConfig(args.config);
  const version = helicordVersion();

  await mkdir(join(out, 'regions'), { recursive: true });
  await mkdir(join(out, 'results'), { recursive: true });
  await mkdir(join(out, 'logs'), { recursive: true });

  // Settings and files of each region; a region that cannot be listed keeps its reason.
  const listed: { name: string; frames: string; config?: string; settings: BatchConfig; files: string[]; problem?: string }[] = [];
  for (const r of rows) {
    const frames = at(r.frames);
    const config = r.config !== undefined ? at(r.config) : undefined;
    let settings = surveyConfig;
    try {
      if (config !== undefined) settings = await readBatchConfig(config);
      settings = { ...settings, components: mergeAssemblySettings(settings.components, args.components ?? {}) };
      listed.push({ name: r.name, frames, ...(config !== undefined && { config }), settings, files: await regionFiles(frames) });
    } catch (e) {
      listed.push({ name: r.name, frames, ...(config !== undefined && { config }), settings, files: [], problem: problemText(e) });
    }
  }

  const total = listed.reduce((n, r) => n + r.files.length, 0);
  const regions: SurveyRegion[] = [];
  const entriesOf = new Map<string, RegionIndex['entries']>();
  const pool = startWorkerPool(Math.max(1, Math.min(args.workers ?? availableParallelism(), total)));
  try {
    progress.start('reading', total);
    for (const r of listed) {
      let problem = r.problem;
      let index: RegionIndex = { region: r.name, entries: [], skipped: [], reordered: [] };
      if (problem === undefined) {
        const scanned = indexScans(await scanFiles(pool, r.files, r.settings.components, () => progress.tick()), r.settings.components);
        index = { region: r.name, entries: scanned.entries, skipped: scanned.skipped, reordered: scanned.reordered };
        if (scanned.entries.length === 0) {
          const first = scanned.skipped[0];
          problem = `no usable frame among ${r.files.length} file(s)${first ? ` (${first.file}: ${first.reason})` : ''}`;
        }
      }
      await writeJson(regionIndexPath(out, r.name), index);
      entriesOf.set(r.name, index.entries);
      regions.push({
        name: r.name, frames: r.frames, ...(r.config !== undefined && { config: r.config }),
        settings: r.settings, settingsDigest: sha256Text(canonicalJson(r.settings)),
        frameCount: problem === undefined ? index.entries.length : 0, skippedCount: index.skipped.length,
        ...(problem !== undefined && { problem }),
      });
    }
    progress.stop();
  } finally {
    await pool.close();
  }

  const tasks = planTasks(regions.map((r) => ({ name: r.name, frames: r.frameCount })), args.chunkFrames,
    (name, start) => primerStart(entriesOf.get(name)!, start, regions.find((r) => r.name === name)!.settings.analysis));
  const plan: SurveyPlan = {
    format: PLAN_FORMAT, version, created: new Date().toISOString(), manifest: resolve(args.manifest),
    timeLimitS: args.timeLimitS, chunkFrames: args.chunkFrames, regions, tasks,
  };
  await writeJson(planPath(out), plan);
  if (tasks.length > 0) {
    await writeFile(scriptPath(out), batchScript({
      surveyDir: out, tasks: tasks.map((t) => t.id), jobName: args.jobName ?? 'helicord-survey', time: formatSlurmTime(args.timeLimitS),
      cpusPerTask: args.cpusPerTask, helicord: args.helicord ?? defaultLauncher(),
      ...(args.memMB !== undefined && { memMB: args.memMB }), ...(args.partition !== undefined && { partition: args.partition }),
      ...(args.account !== undefined && { account: args.account }), ...(args.maxParallel !== undefined && { maxParallel: args.maxParallel }),
    }));
    await chmod(scriptPath(out), 0o755);
  }
  const bad = regions.filter((r) => r.problem !== undefined);
  progress.line(`planned ${tasks.length} task(s) for ${regions.length - bad.length} region(s), ${regions.reduce((n, r) => n + r.frameCount, 0)} frames, in ${out}`);
  for (const r of bad) progress.line(`  region ${r.name}: ${r.problem}`);
  if (tasks.length > 0) progress.line(`submit with: sbatch ${shellWord(scriptPath(out))}   (or run here: helicord survey run ${shellWord(out)} --local)`);
  return plan;
}
