// Velocity inference on a 512 x 512 frame pair: median time per pair for each method and the
// process's peak resident memory after each. Frames: 2600 Gaussian flux elements (both signs,
// 600-1500 G, widths 2.5-4 px) translated by (0.3, -0.2) px in 60 s; bx, by a fanning field.
import type { Frame } from '../../core/frame.js';
import { inferVelocity } from '../../core/velocity/inferVelocity.js';
import type { VelocitySettings } from '../../core/velocity/velocitySettings.js';
import { seededRandom } from '../support/random.js';
import { wallAndCpu } from './_measure.js';

function makeFrame(n: number, shiftX: number, shiftY: number, time: number): Frame {
  const r = seededRandom(2026);
  const bn = new Float64Array(n * n), bx = new Float64Array(n * n), by = new Float64Array(n * n);
  for (let k = 0; k < 2600; k++) {
    const cx = r() * n + shiftX, cy = r() * n + shiftY;
    const b = (r() < 0.5 ? -1 : 1) * (600 + 900 * r()), w = 2.5 + 1.5 * r();
    const reach = Math.ceil(4 * w);
    for (let y = Math.max(0, Math.floor(cy - reach)); y <= Math.min(n - 1, Math.ceil(cy + reach)); y++) {
      for (let x = Math.max(0, Math.floor(cx - reach)); x <= Math.min(n - 1, Math.ceil(cx + reach)); x++) {
        const ex = x - cx, ey = y - cy;
        const g = b * Math.exp(-(ex * ex + ey * ey) / (2 * w * w));
        const i = y * n + x;
        bn[i] += g; bx[i] += (0.8 * g * ex) / w; by[i] += (0.8 * g * ey) / w;
      }
    }
  }
  return { nx: n, ny: n, dx: 0.36, dy: 0.36, time, bn, bx, by };
}

function peakRssMiB(): number {
  return process.resourceUsage().maxRSS / 1024; // maxRSS is in KiB
}

export async function bench(): Promise<void> {
  const n = 512;
  const a = makeFrame(n, 0, 0, 0);
  const b = makeFrame(n, 0.3, -0.2, 60_000);
  const losA: Frame = { ...a, bx: undefined, by: undefined };
  const losB: Frame = { ...b, bx: undefined, by: undefined };
  // CPU time is printed beside wall time: on a shared machine the wall time includes waiting.
  console.log(`frames ${n}x${n}, peak RSS before: ${peakRssMiB().toFixed(0)} MiB, load average ${(await import('node:os')).loadavg()[0].toFixed(1)}`);
  const cases: { label: string; a: Frame; b: Frame; settings: Partial<VelocitySettings>; runs: number }[] = [
    { label: 'dave (sigma 4)', a: losA, b: losB, settings: { method: 'dave' }, runs: 5 },
    { label: 'dave4vm (sigma 4)', a, b, settings: { method: 'dave4vm' }, runs: 5 },
    { label: 'lct (sigma 4, stride 8)', a: losA, b: losB, settings: { method: 'lct', stride: 8 }, runs: 3 },
    { label: 'lct (sigma 4, stride 4)', a: losA, b: losB, settings: { method: 'lct', stride: 4 }, runs: 3 },
  ];
  for (const c of cases) {
    let valid = 0;
    const t = wallAndCpu(() => { valid = inferVelocity(c.a, c.b, c.settings).validFraction; }, c.runs, 1);
    console.log(`${c.label.padEnd(26)} median ${(t.wall / 1000).toFixed(2)} s wall, ${(t.cpu / 1000).toFixed(2)} s CPU per pair  valid ${(100 * valid).toFixed(1)}%  peak RSS ${peakRssMiB().toFixed(0)} MiB`);
  }
}
