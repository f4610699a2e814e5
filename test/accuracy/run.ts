// `npm run accuracy [-- options]`: the accuracy suite. Runs the scenes of test/accuracy/scenes.ts
// through core analyseFrame (velocities inferred from the frames), compares every sample from the
// third frame on with the truth, prints one markdown table and writes everything to
// test-output/accuracy/ (see docs/accuracy.md).
//
//   --scene NAME[,NAME]   scenes by exact name, or every scene whose name contains NAME
//   --noise G[,G]         noise levels (G); default 0, 5, 8, 10
//   --cadence S[,S]       cadences (s); default 720, 45
//   --method M[,M]        auto, dave, lct, dave4vm; default all that apply
//   --mode los|vector     B only or with bx, by (vector scenes only); default both where possible
//   --realisations N      noise realisations of every noisy cell
//   --frames N            frames per sequence (default 5; samples are compared from the third frame)
//   --out DIR             output folder (default test-output/accuracy)
//   --motion M            the analysis's motionModel: footpoints (default) or inferred
//   --list                list the scenes and stop
//
// Without --noise, --method or --realisations the plan is tiered to stay near ten minutes of one
// core: noise 0 with every method (one run); 8 G (the issue's target level) with 'auto' over 20
// realisations and the explicit methods over 5; 5 and 10 G with 'auto' over 5. Any of those
// options makes the plan the full cross product of what is selected, with 20 realisations (or N).

import { execFileSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Method, Mode, RunRecord, Sequence } from './runScene.js';
import { prepareSequence, runSequence } from './runScene.js';
import type { Scene } from './scenes.js';
import { SCENES } from './scenes.js';
import type { CellSummary } from './summary.js';
import { FIRST_COMPARED_PAIR, sci, summariseCell, tableHeader, tableRow } from './summary.js';

interface Options {
  scenes: Scene[];
  noises?: number[];
  cadences: number[];
  methods?: Method[];
  mode?: Mode;
  realisations?: number;
  frames: number;
  out: string;
  motion?: 'footpoints' | 'inferred';
}

const METHODS: Method[] = ['auto', 'dave', 'lct', 'dave4vm'];

function fail(message: string): never {
  console.error(`accuracy: ${message}`);
  process.exit(2);
}

function parse(argv: string[]): Options | 'list' {
  const o: Options = { scenes: [...SCENES], cadences: [720, 45], frames: 5, out: 'test-output/accuracy' };
  const list = (v: string | undefined, flag: string) => {
    if (v === undefined || v.startsWith('--')) fail(`${flag} needs a value`);
    return v.split(',').map((x) => x.trim()).filter(Boolean);
  };
  const numbers = (v: string | undefined, flag: string) => list(v, flag).map((x) => {
    const n = Number(x);
    if (!Number.isFinite(n) || n < 0) fail(`${flag}: ${JSON.stringify(x)} is not a number >= 0`);
    return n;
  });
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    switch (a) {
      case '--scene': {
        const want = list(argv[++i], a);
        o.scenes = SCENES.filter((s) => want.some((w) => s.name === w) || want.some((w) => !SCENES.some((x) => x.name === w) && s.name.includes(w)));
        if (o.scenes.length === 0) fail(`no scene matches ${want.join(', ')}; known: ${SCENES.map((s) => s.name).join(', ')}`);
        break;
      }
      case '--noise': o.noises = numbers(argv[++i], a); break;
      case '--cadence': o.cadences = numbers(argv[++i], a).filter((c) => c > 0); break;
      case '--method': {
        const m = list(argv[++i], a);
        for (const x of m) if (!METHODS.includes(x as Method)) fail(`--method: ${x} is not one of ${METHODS.join(', ')}`);
        o.methods = m as Method[];
        break;
      }
      case '--mode': {
        const m = argv[++i];
        if (m !== 'los' && m !== 'vector') fail('--mode must be los or vector');
        o.mode = m;
        break;
      }
      case '--realisations': {
        const n = Number(argv[++i]);
        if (!Number.isInteger(n) || n < 1) fail('--realisations must be a positive integer');
        o.realisations = n;
        break;
      }
      case '--frames': {
        const n = Number(argv[++i]);
        if (!Number.isInteger(n) || n < FIRST_COMPARED_PAIR + 1) fail(`--frames must be an integer >= ${FIRST_COMPARED_PAIR + 1}`);
        o.frames = n;
        break;
      }
      case '--out': o.out = list(argv[++i], a)[0]; break;
      case '--motion': {
        const m = list(argv[++i], a)[0];
        if (m !== 'footpoints' && m !== 'inferred') fail(`--motion must be footpoints or inferred, got ${JSON.stringify(m)}`);
        o.motion = m;
        break;
      }
      case '--list': return 'list';
      default: fail(`unknown option ${a} (see the head of test/accuracy/run.ts or docs/accuracy.md)`);
    }
  }
  return o;
}

interface PlannedCell { scene: Scene; mode: Mode; cadenceS: number; noiseG: number; method: Method; realisations: number }

/** The cells to run, in order. */
function plan(o: Options): PlannedCell[] {
  const tiered = o.noises === undefined && o.methods === undefined && o.realisations === undefined;
  const cells: PlannedCell[] = [];
  for (const scene of o.scenes) {
    const modes: Mode[] = (scene.vector ? ['los', 'vector'] as Mode[] : ['los'] as Mode[]).filter((m) => !o.mode || m === o.mode);
    for (const mode of modes) for (const cadenceS of o.cadences) {
      const methods = (mode === 'vector' ? ['auto', 'dave4vm'] : ['auto', 'dave', 'lct']).filter((m) => !o.methods || o.methods.includes(m as Method)) as Method[];
      for (const noiseG of o.noises ?? [0, 5, 8, 10]) for (const method of methods) {
        let realisations: number;
        if (noiseG === 0) realisations = 1;
        else if (!tiered) realisations = o.realisations ?? 20;
        else if (noiseG === 8) realisations = method === 'auto' ? 20 : 5;
        else realisations = method === 'auto' ? 5 : 0;
        if (realisations > 0) cells.push({ scene, mode, cadenceS, noiseG, method, realisations });
      }
    }
  }
  return cells;
}

function git(args: string[]): string {
  try { return execFileSync('git', args, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] }).trim(); } catch { return 'unknown'; }
}

function truthCheckTable(sequences: Map<string, Sequence>): string {
  const lines = [
    '| scene | cad s | t s | truth total (engine, true motion) | analytic | analytic - truth | spin | orbit | emergence | shear | E + S - total |',
    '| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |',
  ];
  for (const seq of sequences.values()) {
    const p = Math.min(seq.truths.length, FIRST_COMPARED_PAIR + 1);
    const t = seq.truths[p - 1];
    const diff = t.analytic !== undefined ? `${(100 * (t.analytic - t.total) / t.scale).toFixed(2)}% of S` : '–';
    const es = t.emergence !== undefined ? `${((t.emergence + t.shear! - t.total) / t.scale).toExponential(1)} S` : '–';
    lines.push(`| ${seq.scene.name} | ${seq.cadenceS} | ${t.t} | ${sci(t.total)} | ${sci(t.analytic)} | ${diff} | ${sci(t.spin)} | ${sci(t.orbit)} | ${sci(t.emergence)} | ${sci(t.shear)} | ${es} |`);
  }
  return lines.join('\n');
}

async function main(): Promise<void> {
  const parsed = parse(process.argv.slice(2));
  if (parsed === 'list') {
    for (const s of SCENES) console.log(`${s.name.padEnd(22)} ${s.vector ? 'vector' : 'B only'}  ${s.description}`);
    return;
  }
  const o = parsed;
  const cells = plan(o);
  if (cells.length === 0) fail('nothing to run with these filters');
  const runsTotal = cells.reduce((s, c) => s + c.realisations, 0);
  const startedAt = new Date();
  const load0 = loadavg();
  const cpu0 = process.cpuUsage();
  const wall0 = performance.now();
  console.error(`accuracy: ${cells.length} cells, ${runsTotal} runs of ${o.frames} frames; load average ${load0.map((x) => x.toFixed(2)).join(' ')} on ${cpus().length} cores`);

  const cache: FluxKernelCache = new Map();
  const sequences = new Map<string, Sequence>();
  const summaries: CellSummary[] = [];
  const records: RunRecord[] = [];
  let done = 0;
  for (const cell of cells) {
    const key = `${cell.scene.name}@${cell.cadenceS}`;
    let seq = sequences.get(key);
    if (!seq) { seq = prepareSequence(cell.scene, cell.cadenceS, o.frames, cache); sequences.set(key, seq); }
    const runs: RunRecord[] = [];
    for (let r = 0; r < cell.realisations; r++) {
      runs.push(runSequence(seq, cell.mode, cell.noiseG, cell.method, r, cache, { keepFootpoints: true, ...(o.motion && { settings: { motionModel: o.motion } }) }));
    }
    const summary = summariseCell(seq, runs);
    summaries.push(summary);
    // Footpoint rows are kept in the file for noise-free runs only (they are large).
    for (const run of runs) {
      records.push(cell.noiseG === 0 ? run : { ...run, samples: run.samples.map(({ footpoints: _f, ...s }) => s) });
    }
    done += cell.realisations;
    console.error(`  ${summary.scene} ${summary.mode} ${summary.cadenceS}s ${summary.noiseG}G ${summary.method}: ${(summary.cpuMs / 1000).toFixed(1)} s CPU (${done}/${runsTotal} runs)`);
  }

  const cpu = process.cpuUsage(cpu0);
  const cpuS = (cpu.user + cpu.system) / 1e6;
  const wallS = (performance.now() - wall0) / 1000;
  const load1 = loadavg();
  const commit = git(['rev-parse', '--short', 'HEAD']);
  const coreDirty = git(['status', '--porcelain', '--', 'core']);
  const command = `npm run accuracy${process.argv.length > 2 ? ` -- ${process.argv.slice(2).join(' ')}` : ''}`;

  const table = [tableHeader(), ...summaries.map(tableRow)].join('\n');
  const truths = truthCheckTable(sequences);
  console.log(`\n## Accuracy (${command})\n`);
  console.log(`core at ${commit}${coreDirty && coreDirty !== 'unknown' ? ' with uncommitted changes in core/' : ''}; ${startedAt.toISOString()}\n`);
  console.log(table);
  console.log('\nErrors: signed mean over realisations and samples from the third frame on; "S" marks an error over the scene scale where the truth is near 0 (docs/accuracy.md).');
  const refused = summaries.filter((s) => s.errors.length);
  if (refused.length) {
    console.log('\nRefused frames:');
    for (const s of refused) console.log(`- ${s.scene} ${s.mode} ${s.cadenceS}s ${s.noiseG}G ${s.method}: ${s.errors[0]}${s.errors.length > 1 ? ` (+${s.errors.length - 1} more)` : ''}`);
  }
  console.log(`\n### Truth check (one pair per sequence, the third and fourth frames: t is its mid-time)\n\n${truths}`);
  console.log(`\nCPU ${cpuS.toFixed(1)} s, wall ${wallS.toFixed(1)} s; load average at start ${load0.map((x) => x.toFixed(2)).join(' ')}, at end ${load1.map((x) => x.toFixed(2)).join(' ')} (${cpus().length} cores)`);

  mkdirSync(o.out, { recursive: true });
  const stamp = startedAt.toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');
  const report = {
    command, startedAt: startedAt.toISOString(), commit, coreUncommittedChanges: coreDirty !== '' && coreDirty !== 'unknown',
    node: process.version, cpuS, wallS, loadavgStart: load0, loadavgEnd: load1, cores: cpus().length,
    frames: o.frames, firstComparedPair: FIRST_COMPARED_PAIR,
    scenes: o.scenes.map((s) => ({ name: s.name, description: s.description, grid: s.grid, vector: s.vector, target: s.target, analytic: s.analytic ?? null, turning: s.turning ?? [], objects: s.objects.map((x) => ({ name: x.name, kind: x.kind, polarity: x.polarity, axisRatio: x.axisRatio })) })),
    truths: [...sequences.values()].map((s) => ({ scene: s.scene.name, cadenceS: s.cadenceS, times: s.times, pairs: s.truths })),
    cells: summaries,
    runs: records,
  };
  const json = JSON.stringify(report);
  writeFileSync(join(o.out, `accuracy-${stamp}.json`), json);
  writeFileSync(join(o.out, 'latest.json'), json);
  writeFileSync(join(o.out, 'latest.md'), `# ${command}\n\n${table}\n\n${truths}\n`);
  console.log(`\nwritten: ${join(o.out, `accuracy-${stamp}.json`)} (and latest.json, latest.md)`);
}

await main();
