// The core engine's figures, with peers timed fairly in the same run:
//  1. G_theta map and total, A_p and the label split with 50 footpoints for 256^2, 512^2 and
//     1024^2 frames, beside scipy (test/bench/peers/scipy_gtheta.py, Debian's python3-scipy):
//     fftconvolve, and cached real FFTs with glibc's allocator tuned (MALLOC_MMAP_THRESHOLD_ at its
//     64-bit maximum of 32 MiB and MALLOC_TRIM_THRESHOLD_ at 1 GiB, so that large arrays are not
//     mapped and unmapped anew each call, as a user timing many frames would set it) at 1 and 2
//     FFT threads (scipy.fft workers), and untuned for reference;
//  2. the whole frame at 512^2 (a demo pair without velocities): our analyseFrame and our bare
//     inference + G_theta, beside the numpy/scipy whole-frame peer (peers/scipy_frame.py: DAVE
//     by scipy.ndimage Gaussian windows, G_theta by cached real FFTs) on the same pair;
//  3. cost growth 256^2 .. 2048^2: G_theta and analyseFrame with given velocities, each size in a
//     child process of its own (test/bench/_growthChild.ts) so that its peak RSS is its own, and
//     the exponent of time against pixel count fitted by least squares in log-log.
// The machine is shared: every table prints CPU time beside wall time and the load average.
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { analyseFrame, analyseFrameSteps } from '../../core/frameAnalysis.js';
import type { AnalysisState } from '../../core/frameAnalysis.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import { createFluxKernel, fluxKernelFor } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { convolveField, helicityFlux } from '../../core/helicityFlux.js';
import { splitByLabels } from '../../core/labelSplit.js';
import { inferVelocity } from '../../core/velocity/inferVelocity.js';
import { midFrame } from '../../core/velocity/midFrame.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { rssMiB, wallAndCpu, wallAndCpuAsync } from './_measure.js';
import { FrameAssistant, runStepsAssisted } from '../../server/frameAssistant.js';
import { syntheticFrame } from './_syntheticFrame.js';

/** glibc tunables a scipy user sets so that large arrays stop being mmap'd and unmapped per call. */
export const TUNED_MALLOC = { MALLOC_MMAP_THRESHOLD_: String(32 * 1048576), MALLOC_TRIM_THRESHOLD_: String(1073741824) };

const peersDir = fileURLToPath(new URL('../../../test/bench/peers/', import.meta.url));

function load(): string {
  return `load average ${loadavg().map((v) => v.toFixed(2)).join(' ')}`;
}

interface PeerLine { n: number; scipy: string; workers: number; fftconvolve_ms: number | null; rfft_cached_ms: number; rfft_cached_cpu_ms: number }

function python(script: string, args: string[], env: Record<string, string> = {}): string[] | undefined {
  if (!existsSync('/usr/bin/python3')) { console.log('peers: skipped, /usr/bin/python3 is missing'); return undefined; }
  try {
    const text = execFileSync('/usr/bin/python3', [join(peersDir, script), ...args], { encoding: 'utf8', timeout: 600_000, env: { ...process.env, ...env } });
    return text.trim().split('\n');
  } catch (e) {
    console.log(`peers: ${script} skipped, it failed (install python3-scipy python3-numpy): ${(e as Error).message.split('\n')[0]}`);
    return undefined;
  }
}

function scipyPeers(sizes: number[], workers: number, env: Record<string, string>): Map<number, PeerLine> {
  const out = new Map<number, PeerLine>();
  for (const line of python('scipy_gtheta.py', ['--workers', String(workers), ...sizes.map(String)], env) ?? []) {
    const r = JSON.parse(line) as PeerLine;
    out.set(r.n, r);
  }
  return out;
}

async function engineTable(): Promise<void> {
  const sizes = [256, 512, 1024];
  console.log(`-- G_theta, A_p, label split (${load()})`);
  // Peers first, then ours: each runs alone on its core; the other core is shared with whoever else runs.
  const tuned1 = scipyPeers(sizes, 1, TUNED_MALLOC);
  const tuned2 = scipyPeers(sizes, 2, TUNED_MALLOC);
  const untuned = scipyPeers(sizes, 1, {});
  let peak = rssMiB();
  for (const n of sizes) {
    const f = syntheticFrame(n, 50);
    const t0 = performance.now();
    const kernel = createFluxKernel(f);
    const kernelMs = performance.now() - t0;
    const t = fluxTransport(f);
    const runs = n >= 1024 ? 5 : 9;
    // Warm-up long enough for the JIT (about half a second of calls): the first size is measured
    // first, and the JavaScript around the WebAssembly kernels takes 7-20 calls to reach its steady
    // speed on a loaded machine (docs/speed.md).
    const warmup = n >= 1024 ? 3 : n >= 512 ? 10 : 30;
    const gtheta = wallAndCpu(() => helicityFlux(kernel, t), runs, warmup);
    peak = Math.max(peak, rssMiB());
    // The same call on the TypeScript fallback (no WebAssembly SIMD; the same numbers bit for bit).
    const plainKernel = createFluxKernel(f, { simd: false });
    const plain = wallAndCpu(() => helicityFlux(plainKernel, t), runs, warmup);
    const ap = wallAndCpu(() => convolveField(kernel, t.bn), runs);
    const total = helicityFlux(kernel, t).total;
    let convolved = 0;
    const split = wallAndCpu(() => { convolved = splitByLabels(kernel, t, f.labels, { total }).convolvedFootpoints; }, n >= 1024 ? 3 : 5, 1);
    peak = Math.max(peak, rssMiB());
    console.log(`${n}x${n}: G_theta map+total ${gtheta.wall.toFixed(1)} ms (CPU ${gtheta.cpu.toFixed(1)}; ${kernel.arena ? 'WebAssembly SIMD' : 'no SIMD here'}; TypeScript fallback ${plain.wall.toFixed(1)} ms, CPU ${plain.cpu.toFixed(1)}) | A_p ${ap.wall.toFixed(1)} ms | label split (50 footpoints, ${convolved} by FFT) ${split.wall.toFixed(1)} ms (CPU ${split.cpu.toFixed(1)}) | kernel spectra (once per grid) ${kernelMs.toFixed(0)} ms`);
    const p1 = tuned1.get(n), p2 = tuned2.get(n), pu = untuned.get(n);
    if (p1 && pu) {
      // ratio = peer time / our time: > 1 means helicord is faster.
      // By CPU time too: on a loaded machine the wall times carry other people's jobs.
      const ratio = (peerMs: number, peerCpu?: number) => `${(peerMs / gtheta.wall).toFixed(2)}${peerCpu !== undefined ? ` (CPU ${(peerCpu / gtheta.cpu).toFixed(2)})` : ''}`;
      console.log(`    scipy ${p1.scipy} cached rfft, allocator tuned: 1 thread ${p1.rfft_cached_ms.toFixed(1)} ms (CPU ${p1.rfft_cached_cpu_ms.toFixed(1)}) ratio ${ratio(p1.rfft_cached_ms, p1.rfft_cached_cpu_ms)}`
        + (p2 ? ` | 2 threads ${p2.rfft_cached_ms.toFixed(1)} ms (CPU ${p2.rfft_cached_cpu_ms.toFixed(1)}) ratio ${ratio(p2.rfft_cached_ms, p2.rfft_cached_cpu_ms)}` : '')
        + ` | untuned 1 thread ${pu.rfft_cached_ms.toFixed(1)} ms ratio ${ratio(pu.rfft_cached_ms)}`
        + (pu.fftconvolve_ms !== null ? ` | fftconvolve (kernels transformed per call) ${pu.fftconvolve_ms.toFixed(1)} ms ratio ${ratio(pu.fftconvolve_ms)}` : ''));
    }
  }
  console.log(`peak RSS ${peak.toFixed(0)} MiB (sampled after each stage). Ratios are peer time / helicord time: > 1 means helicord is faster. `
    + `Allocator tuned = ${Object.entries(TUNED_MALLOC).map(([k, v]) => `${k}=${v}`).join(' ')}; 2 threads = scipy.fft workers=2, helicord on one thread.`);
}

async function wholeFrameTable(): Promise<void> {
  const n = 512;
  console.log(`-- whole frame ${n}x${n}, inferred velocities (DAVE, sigma 4, threshold 50 G), demo pair 720 s apart (${load()})`);
  const region = demoRegion({ frames: 2, size: n, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
  const a = region.frameAt(0), b = region.frameAt(1);
  const cache: FluxKernelCache = new Map();
  const first = analyseFrame(a, {}, {}, cache).state;
  let total = 0;
  // Warmed up as a monitor or a batch worker is after a few frames (the first calls run before the
  // JIT has optimised the long functions: about 1.7 s CPU cold against 0.5 s warm here).
  const ours = wallAndCpu(() => { total = analyseFrame(b, first as AnalysisState, {}, cache).sample!.total; }, 5, 8);
  let bare = 0;
  const same = wallAndCpu(() => {
    const v = inferVelocity(a, b, {});
    const mid = midFrame(a, b);
    bare = helicityFlux(fluxKernelFor(mid, cache), fluxTransport(mid, v)).total;
  }, 5, 8);
  console.log(`helicord analyseFrame (inference, noise, segmentation, tracking, footpoint motions, split, uncertainties): ${ours.wall.toFixed(0)} ms wall, ${ours.cpu.toFixed(0)} ms CPU, total ${total.toExponential(3)} Mx^2/s`);
  console.log(`helicord the peer's steps only (inferVelocity + helicityFlux): ${same.wall.toFixed(0)} ms wall, ${same.cpu.toFixed(0)} ms CPU, total ${bare.toExponential(3)} Mx^2/s`);
  const dir = mkdtempSync(join(tmpdir(), 'helicord-peer-'));
  try {
    writeFileSync(join(dir, 'a.bin'), new Uint8Array(a.bn.buffer, a.bn.byteOffset, a.bn.byteLength));
    writeFileSync(join(dir, 'b.bin'), new Uint8Array(b.bn.buffer, b.bn.byteOffset, b.bn.byteLength));
    writeFileSync(join(dir, 'frame.json'), JSON.stringify({ nx: n, ny: n, dx: a.dx, dy: a.dy, dtS: (b.time - a.time) / 1000, sigma: 4, thresholdG: 50, runs: 3 }));
    const line = python('scipy_frame.py', [dir], TUNED_MALLOC);
    if (line) {
      const r = JSON.parse(line[0]) as { scipy: string; wall_ms: number; cpu_ms: number; valid_share: number; total: number };
      console.log(`numpy/scipy peer (scipy ${r.scipy}, allocator tuned): ${r.wall_ms.toFixed(0)} ms wall, ${r.cpu_ms.toFixed(0)} ms CPU, ${(100 * r.valid_share).toFixed(1)}% pixels with a velocity, total ${r.total.toExponential(3)} Mx^2/s`
        + ` | ratio peer/analyseFrame ${(r.wall_ms / ours.wall).toFixed(2)} (CPU ${(r.cpu_ms / ours.cpu).toFixed(2)}), peer/same steps ${(r.wall_ms / same.wall).toFixed(2)} (CPU ${(r.cpu_ms / same.cpu).toFixed(2)})`);
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  // A full-resolution 1024^2 pair, the same analysis (warmed up by two calls).
  const big = demoRegion({ frames: 2, size: 1024, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
  const a2 = big.frameAt(0), b2 = big.frameAt(1);
  const cache2: FluxKernelCache = new Map();
  const first2 = analyseFrame(a2, {}, {}, cache2).state;
  const pair = wallAndCpu(() => { total = analyseFrame(b2, first2 as AnalysisState, {}, cache2).sample!.total; }, 3, 2);
  console.log(`helicord analyseFrame, 1024x1024 pair, inferred velocities: ${pair.wall.toFixed(0)} ms wall, ${pair.cpu.toFixed(0)} ms CPU, total ${total.toExponential(3)} Mx^2/s (${load()})`);
  // The same pair as the monitor analyses one region's frame: its forks (the inference, a part of
  // the split) on a second thread (server/frameAssistant.ts), both cores for one frame. The
  // assistant's thread is warmed up as long as this one was.
  const assistant = new FrameAssistant();
  try {
    let twoTotal = NaN;
    const two = await wallAndCpuAsync(async () => {
      twoTotal = (await runStepsAssisted(analyseFrameSteps(b2, first2 as AnalysisState, {}, cache2), assistant, cache2)).sample!.total;
    }, 5, 4);
    console.log(`helicord the same pair on two threads (the monitor's driver): ${two.wall.toFixed(0)} ms wall, ${two.cpu.toFixed(0)} ms CPU of both threads, total ${twoTotal === total ? 'the same' : `DIFFERENT: ${twoTotal.toExponential(6)}`} (${load()})`);
  } finally {
    await assistant.close();
  }
}

function growthTable(): void {
  const child = fileURLToPath(new URL('./_growthChild.js', import.meta.url));
  console.log(`-- cost growth, each size in its own process (${load()})`);
  const rows: { n: number; gWall: number; gCpu: number; fWall: number; fCpu: number; rss: number }[] = [];
  for (const n of [256, 512, 1024, 2048]) {
    const text = execFileSync(process.execPath, [child, String(n)], { encoding: 'utf8', timeout: 600_000 });
    const r = JSON.parse(text.trim().split('\n').pop()!);
    rows.push(r);
    console.log(`${String(n).padStart(4)}^2: G_theta ${r.gWall.toFixed(1)} ms (CPU ${r.gCpu.toFixed(1)}) | analyseFrame, given velocities ${r.fWall.toFixed(0)} ms (CPU ${r.fCpu.toFixed(0)}) | peak RSS ${r.rss.toFixed(0)} MiB`);
  }
  // Least-squares slope of log(time) against log(pixels): 1 is linear; N log N reads a little above 1.
  const slope = (ys: number[]) => {
    const xs = rows.map((r) => Math.log(r.n * r.n)), ls = ys.map(Math.log);
    const mx = xs.reduce((s, v) => s + v, 0) / xs.length, my = ls.reduce((s, v) => s + v, 0) / ls.length;
    let sxy = 0, sxx = 0;
    xs.forEach((x, i) => { sxy += (x - mx) * (ls[i] - my); sxx += (x - mx) ** 2; });
    return sxy / sxx;
  };
  const nlogn = slope(rows.map((r) => r.n * r.n * Math.log(r.n * r.n)));
  console.log(`fitted exponent of CPU time against pixel count: G_theta ${slope(rows.map((r) => r.gCpu)).toFixed(2)}, analyseFrame ${slope(rows.map((r) => r.fCpu)).toFixed(2)} (N log N over these sizes would read ${nlogn.toFixed(2)})`);
}

export async function bench(): Promise<void> {
  await engineTable();
  await wholeFrameTable();
  growthTable();
}
