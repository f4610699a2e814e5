// Point-footpoint protocols with known braids: strands on a line exchanged pairwise by half turns
// about their midpoint (Boyland, Aref & Stremler 2000's stirring protocols), and a rigid rotation.
// Shared by the braid tests (points) and the pipeline test (Gaussian spots placed at the points).

import type { StrandFrame } from '../../core/braid/strandCrossings.js';

export interface Exchange { readonly position: number; readonly sign: 1 | -1 }

/** sigma_1 sigma_2^-1: the first two exchange clockwise, then the last two counter-clockwise. */
export const GOLDEN: readonly Exchange[] = [{ position: 1, sign: 1 }, { position: 2, sign: -1 }];
/** sigma_1^2: one clockwise full turn of the first two. */
export const TWIST: readonly Exchange[] = [{ position: 1, sign: 1 }, { position: 1, sign: 1 }];

export const GOLDEN_ENTROPY = Math.log((3 + Math.sqrt(5)) / 2);

/**
 * Frames of n strands starting at x = 0, spacing, 2 spacing, ... (y = 0) that perform `word`
 * `periods` times, each exchange a half turn (clockwise for sign +1) about the pair's midpoint in
 * `steps` frames `dtS` apart, `rest` still frames before and after.
 */
export function exchangeFrames(n: number, word: readonly Exchange[], periods: number, options: { steps?: number; dtS?: number; spacing?: number; rest?: number; t0?: number; flux?: readonly number[] } = {}): StrandFrame[] {
  const { steps = 8, dtS = 600, spacing = 1, rest = 0, t0 = Date.UTC(2026, 2, 14, 0, 0, 0) } = options;
  const flux = options.flux ?? Array.from({ length: n }, () => 1e20);
  const x = Array.from({ length: n }, (_, k) => k * spacing), y = new Array<number>(n).fill(0);
  const at = Array.from({ length: n }, (_, k) => k); // strand at each position
  const frames: StrandFrame[] = [];
  let time = t0;
  const push = () => { frames.push({ time, x: [...x], y: [...y], flux: [...flux] }); time += dtS * 1000; };
  push();
  for (let r = 0; r < rest; r++) push();
  for (let p = 0; p < periods; p++) {
    for (const g of word) {
      const u = at[g.position - 1], v = at[g.position];
      const cx = (x[u] + x[v]) / 2, cy = (y[u] + y[v]) / 2;
      const ux = x[u] - cx, uy = y[u] - cy, vx = x[v] - cx, vy = y[v] - cy;
      for (let s = 1; s <= steps; s++) {
        const a = (-g.sign * Math.PI * s) / steps; // clockwise for +1
        const c = Math.cos(a), sn = Math.sin(a);
        x[u] = cx + c * ux - sn * uy; y[u] = cy + sn * ux + c * uy;
        x[v] = cx + c * vx - sn * vy; y[v] = cy + sn * vx + c * vy;
        if (s === steps) { x[u] = cx - ux; y[u] = cy - uy; x[v] = cx - vx; y[v] = cy - vy; }
        push();
      }
      at[g.position - 1] = v; at[g.position] = u;
    }
  }
  for (let r = 0; r < rest; r++) push();
  return frames;
}

/** n strands on a circle of `radius` about (cx, cy) turning rigidly by `turns` (counter-clockwise positive) in `frames` steps. */
export function rotationFrames(n: number, turns: number, count: number, options: { dtS?: number; radius?: number; cx?: number; cy?: number; t0?: number; flux?: readonly number[] } = {}): StrandFrame[] {
  const { dtS = 600, radius = 1, cx = 0, cy = 0, t0 = Date.UTC(2026, 2, 14, 0, 0, 0) } = options;
  const flux = options.flux ?? Array.from({ length: n }, () => 1e20);
  const frames: StrandFrame[] = [];
  for (let f = 0; f <= count; f++) {
    const base = (2 * Math.PI * turns * f) / count;
    const phase = (k: number) => base + (2 * Math.PI * k) / n + 0.1;
    frames.push({
      time: t0 + f * dtS * 1000,
      x: Array.from({ length: n }, (_, k) => cx + radius * Math.cos(phase(k))),
      y: Array.from({ length: n }, (_, k) => cy + radius * Math.sin(phase(k))),
      flux: [...flux],
    });
  }
  return frames;
}
