// Before/after of analyseFrame in one interleaved run: two builds of the project (dist
// directories, e.g. one from `git archive <commit>` compiled with `npx tsc --outDir`), each
// analysing the same 512^2 demo pair with inferred velocities (DAVE, the defaults), rounds
// alternating which build goes first. Prints CPU time (user + system) beside wall time and the load
// average, and each build's total so that a reader can see both computed the same thing.
//   node dist/test/bench/frameInterleaved.js <before dist> <after dist> [rounds]
import { loadavg } from 'node:os';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

type Analyse = (frame: unknown, state: unknown, options: unknown, cache: unknown) => { state: unknown; sample?: { total: number } };

async function build(dir: string): Promise<{ analyse: Analyse; demoRegion: (o: unknown) => { frameAt(i: number): unknown } }> {
  const at = (file: string) => pathToFileURL(resolve(dir, file)).href;
  const { analyseFrame } = (await import(at('core/frameAnalysis.js'))) as { analyseFrame: Analyse };
  const { demoRegion } = (await import(at('replay/demo/demoRegion.js'))) as { demoRegion: (o: unknown) => { frameAt(i: number): unknown } };
  return { analyse: analyseFrame, demoRegion };
}

async function main(): Promise<void> {
  const [beforeDir, afterDir, roundsArg] = process.argv.slice(2);
  if (!beforeDir || !afterDir) throw new Error('usage: frameInterleaved.js <before dist> <after dist> [rounds]');
  const rounds = Number(roundsArg ?? 8);
  const builds = { before: await build(beforeDir), after: await build(afterDir) };
  const region = builds.after.demoRegion({ frames: 2, size: 512, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
  const f0 = region.frameAt(0), f1 = region.frameAt(1);
  const run: Record<string, () => number> = {};
  for (const [name, b] of Object.entries(builds)) {
    const cache = new Map();
    const state = b.analyse(f0, {}, {}, cache).state;
    run[name] = () => b.analyse(f1, state, {}, cache).sample!.total;
    run[name]();
  }
  const load = () => loadavg().map((v) => v.toFixed(2)).join(' ');
  for (let round = 0; round < rounds; round++) {
    for (const name of round % 2 ? ['after', 'before'] : ['before', 'after']) {
      const cpu: number[] = [], wall: number[] = [];
      let total = 0;
      for (let i = 0; i < 4; i++) {
        const c = process.cpuUsage(), t = performance.now();
        total = run[name]();
        wall.push(performance.now() - t);
        const d = process.cpuUsage(c);
        cpu.push((d.user + d.system) / 1000);
      }
      cpu.sort((a, b) => a - b); wall.sort((a, b) => a - b);
      console.log(`round ${round} ${name.padEnd(6)} CPU median ${((cpu[1] + cpu[2]) / 2).toFixed(0)} ms (min ${cpu[0].toFixed(0)}) `
        + `wall median ${((wall[1] + wall[2]) / 2).toFixed(0)} ms, total ${total.toExponential(12)} | load average ${load()}`);
    }
  }
}

await main();
