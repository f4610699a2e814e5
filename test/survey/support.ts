// Shared by the survey tests: demo-like regions (the demo story with a seed of their own), quiet
// progress streams, and CSV tables compared to rounding.
import { Writable } from 'node:stream';
import { expect } from 'vitest';
import { synth } from '../../replay/synthCommand.js';

export const quiet = () => new Writable({ write(_c, _e, done) { done(); } });

export class Collect extends Writable {
  text = '';
  override _write(chunk: Buffer, _enc: string, done: () => void) { this.text += chunk.toString(); done(); }
}

/** A demo-like region: the demo story, `frames` frames of size^2 at 720 s, its own noise seed. */
export function demoLike(out: string, frames: number, seed: number, size = 64): Promise<void> {
  return synth({ out, frames, size, demo: { seed, cadenceS: 720, noiseG: 5 + seed } });
}

/** Rows of a CSV text (no quoted commas in these tables' numbers). */
export function csvRows(text: string): string[][] {
  return text.trim().split('\n').map((l) => l.split(','));
}

/**
 * Two CSV tables equal: the same header and rows, numbers within `rel` of each other (the label
 * split of a chunk sums in its tracker's id order, so spin, orbit and background agree to
 * rounding), every other cell identical.
 */
export function expectSameTable(a: string, b: string, what: string, rel = 1e-12): void {
  const [x, y] = [csvRows(a), csvRows(b)];
  expect(y.length, `${what}: rows`).toBe(x.length);
  expect(y[0], `${what}: header`).toEqual(x[0]);
  x.forEach((row, i) => row.forEach((v, k) => {
    const p = Number(v), q = Number(y[i][k]);
    if (v !== '' && Number.isFinite(p)) expect(Math.abs(q - p), `${what}: ${x[0][k]} of row ${i}`).toBeLessThanOrEqual(rel * Math.abs(p));
    else expect(y[i][k], `${what}: ${x[0][k]} of row ${i}`).toBe(v);
  }));
}
