// Footpoint segmentation and tracking on 512^2 frames with about 100 footpoints, and the pattern
// rotation fit per footpoint. Target: 150 ms per 512^2 frame for segmentation plus tracking.
import type { FootpointState } from '../../core/footpoints/analyseFootpoints.js';
import { analyseFootpoints } from '../../core/footpoints/analyseFootpoints.js';
import { patternRotation } from '../../core/footpoints/patternRotation.js';
import { regionProperties } from '../../core/footpoints/regionProperties.js';
import { segmentFootpoints } from '../../core/footpoints/segmentation.js';
import type { Spot } from '../footpoints/scene.js';
import { sceneFrame } from '../footpoints/scene.js';
import { seededRandom } from '../support/random.js';
import { rssMiB } from './_measure.js';

/**
 * Median wall time and median CPU time (user + system of this process) of repeated runs, ms. The
 * machine is shared: under load the wall time grows with the other jobs, the CPU time much less.
 */
function medianMs(fn: () => unknown, runs = 7, warmup = 2): number {
  const m = timed(fn, runs, warmup);
  return m.wall;
}
const cpuOf: number[] = [];
function timed(fn: () => unknown, runs: number, warmup: number): { wall: number; cpu: number } {
  for (let i = 0; i < warmup; i++) fn();
  const wall: number[] = [], cpu: number[] = [];
  for (let i = 0; i < runs; i++) {
    const c = process.cpuUsage();
    const t = performance.now();
    fn();
    wall.push(performance.now() - t);
    const d = process.cpuUsage(c);
    cpu.push((d.user + d.system) / 1000);
  }
  const mid = (a: number[]) => a.sort((p, q) => p - q)[Math.floor(a.length / 2)];
  const out = { wall: mid(wall), cpu: mid(cpu) };
  cpuOf.push(out.cpu);
  return out;
}
const lastCpu = () => cpuOf[cpuOf.length - 1].toFixed(1);

export async function bench(): Promise<void> {
  const grid = { nx: 512, ny: 512, dx: 0.36, dy: 0.36 };
  const r = seededRandom(11);
  const spots: Spot[] = [];
  for (let k = 0; k < 110; k++) {
    spots.push({
      x: 6 + 172 * r(), y: 6 + 172 * r(), a: 0.8 + 1.6 * r(), b: 0.6 + 0.8 * r(), angle: Math.PI * r(),
      peak: (r() < 0.5 ? -1 : 1) * (300 + 1700 * r()),
    });
  }
  const frameAt = (k: number) => sceneFrame(grid, k * 60_000, spots.map((s) => ({ ...s, x: s.x + 0.15 * k, angle: s.angle + 0.02 * k })), 8, 100 + k);
  const frames = [0, 1, 2, 3].map(frameAt);
  const first = analyseFootpoints(undefined, frames[0], { noise: 8 });
  const count = first.footpoints.length;
  console.log(`grid 512x512, ${count} footpoints found (${spots.length} spots painted, some touch)`);

  const seg = medianMs(() => segmentFootpoints(frames[1].bn, grid, {}), 7, 2);
  const segCpu = lastCpu();
  const segProps = medianMs(() => {
    const s = segmentFootpoints(frames[1].bn, grid, {});
    regionProperties(s.labels, frames[1].bn, grid);
  }, 7, 2);
  const segPropsCpu = lastCpu();
  let state: FootpointState = first.state;
  const track = medianMs(() => analyseFootpoints(first.state, frames[1], { patternRotation: false }), 9, 2);
  const trackCpu = lastCpu();
  const full = medianMs(() => analyseFootpoints(first.state, frames[1], {}), 7, 1);
  const fullCpu = lastCpu();
  const rotated = analyseFootpoints(first.state, frames[1], {});
  const fitted = rotated.footpoints.filter((f) => f.anisotropy !== null).length;
  const measured = rotated.footpoints.filter((f) => f.omegaPattern !== null).length;
  // The fits alone, footpoint by footpoint, on the continued footpoints of that frame pair.
  const a = first.state, b = rotated.state;
  const pairs = b.footpoints.filter((f) => a.footpoints.some((p) => p.id === f.id));
  const fitAll = () => {
    for (const f of pairs) {
      const p = a.footpoints.find((q) => q.id === f.id)!;
      patternRotation({ field: a.field, labels: a.labels, label: p.id, x: p.x, y: p.y, box: p.box },
        { field: b.field, labels: b.labels, label: f.id, x: f.x, y: f.y, box: f.box }, grid, { noiseCorrelation: 4 * Math.PI });
    }
  };
  const fitMs = medianMs(fitAll, 5, 1) / pairs.length;
  const fitCpu = (cpuOf[cpuOf.length - 1] / pairs.length).toFixed(3);
  const px = pairs.reduce((s, f) => s + f.pixels, 0) / pairs.length;
  for (const f of frames.slice(1)) state = analyseFootpoints(state, f, {}).state;
  const load = (await import('node:os')).loadavg()[0].toFixed(1);
  console.log(`load average ${load} on this machine (wall times grow with it; CPU times much less)`);
  console.log(`noise estimate + smoothing + tessellation: median ${seg.toFixed(1)} ms wall, ${segCpu} ms CPU per frame`);
  console.log(`  + region properties:                     median ${segProps.toFixed(1)} ms wall, ${segPropsCpu} ms CPU per frame`);
  console.log(`segmentation + tracking (analyseFootpoints, no pattern fit, no velocity): median ${track.toFixed(1)} ms wall, ${trackCpu} ms CPU per frame (target 150 ms)`);
  console.log(`with pattern rotation fits: median ${full.toFixed(1)} ms wall, ${fullCpu} ms CPU per frame; ${fitted} fits tried (${measured} gave an angle)`);
  console.log(`pattern rotation fit alone: median ${fitMs.toFixed(3)} ms wall, ${fitCpu} ms CPU per footpoint (mean footpoint ${px.toFixed(0)} pixels)`);
  // For the record: the same frame with a velocity field adds the exact label split (core/labelSplit.ts).
  const n = grid.nx * grid.ny;
  const vel = { vx: Float64Array.from({ length: n }, (_, i) => 0.3 * Math.sin(i / 997)), vy: Float64Array.from({ length: n }, (_, i) => 0.3 * Math.cos(i / 1231)) };
  const cache = new Map();
  analyseFootpoints(first.state, frames[1], { patternRotation: false, kernelCache: cache }, vel);
  const exact = medianMs(() => analyseFootpoints(first.state, frames[1], { patternRotation: false, kernelCache: cache }, vel), 3, 0);
  console.log(`with a velocity field (motion from it, exact label split, no pattern fit): median ${exact.toFixed(0)} ms wall, ${lastCpu()} ms CPU per frame`);
  console.log(`rss ${rssMiB().toFixed(0)} MiB`);
}
