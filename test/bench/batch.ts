// Batch throughput: frames per second of `process` over demo archives (FITS frames) of 256^2
// and 512^2, one worker against every core, with the peak resident memory of the run (workers
// are threads of the same process, so the RSS covers them). Frames carry the demo's velocities
// unless inference exists, in which case a second run without velocities is timed too. Each is
// run with the noise estimated from every frame (the default) and with the noise given.
// HELICORD_BENCH_FRAMES overrides the frame counts (default 120 at 256^2, 60 at 512^2).

import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { processFolder } from '../../replay/processCommand.js';
import { synth } from '../../replay/synthCommand.js';
import { rssMiB } from './_measure.js';

const quiet = new Writable({ write(_c, _e, done) { done(); } });

async function timed(folder: string, out: string, workers: number, config?: string): Promise<{ s: number; cpu: number; peak: number; samples: number }> {
  let peak = rssMiB();
  const timer = setInterval(() => { peak = Math.max(peak, rssMiB()); }, 50);
  const t = performance.now();
  // CPU time of the whole process: the workers are its threads.
  const c = process.cpuUsage();
  const r = await processFolder({ folder, out, workers, progress: quiet, ...(config !== undefined && { config }) });
  const d = process.cpuUsage(c);
  const s = (performance.now() - t) / 1000;
  clearInterval(timer);
  peak = Math.max(peak, rssMiB());
  return { s, cpu: (d.user + d.system) / 1e6, peak, samples: r.samples };
}

export async function bench(): Promise<void> {
  const cores = availableParallelism();
  const override = Number(process.env.HELICORD_BENCH_FRAMES);
  const dir = await mkdtemp(join(tmpdir(), 'helicord-bench-'));
  // The same runs with the noise level given (--config), to show what the per-frame noise
  // estimate costs.
  const noiseGiven = join(dir, 'noise.json');
  await writeFile(noiseGiven, JSON.stringify({ analysis: { noiseG: 5 } }));
  try {
    for (const [size, defaultFrames] of [[256, 120], [512, 60]] as const) {
      const frames = override > 0 ? override : defaultFrames;
      for (const withVelocity of [true, false]) {
        const folder = join(dir, `a${size}${withVelocity ? 'v' : ''}`);
        // 12-minute frames from story hour 16 (the build-up) at the story's own pace.
        await synth({ out: folder, frames, size, withVelocity, demo: { cadenceS: 720, storyH: 72, storyStartH: 16 } });
        for (const config of [undefined, noiseGiven]) {
          for (const workers of [1, cores]) {
            const r = await timed(folder, join(dir, 'out.csv'), workers, config);
            if (!withVelocity && r.samples === 0) {
              console.log(`${size}^2 without velocities: no samples (analyseFrame does not infer velocities yet); not timed`);
              break;
            }
            console.log(`${size}^2 x ${frames} frames, ${withVelocity ? 'given velocities' : 'inferred velocities'}, noise ${config ? 'given' : 'estimated per frame'}, ${workers} worker${workers > 1 ? 's' : ''}: `
              + `${(frames / r.s).toFixed(2)} frames/s (${r.s.toFixed(1)} s, reading included), ${(r.cpu / frames).toFixed(2)} s CPU per frame, `
              + `peak RSS ${r.peak.toFixed(0)} MiB (load average ${loadavg().map((v) => v.toFixed(1)).join(' ')})`);
          }
          if (!withVelocity) break;
        }
        await rm(folder, { recursive: true, force: true });
      }
    }
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
