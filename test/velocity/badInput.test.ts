import { describe, expect, it } from 'vitest';
import type { Frame } from '../../core/frame.js';
import { InputError } from '../../core/inputError.js';
import { inferVelocity } from '../../core/velocity/inferVelocity.js';
import { blobField, randomBlobs, scenePair, translation } from './scenes.js';

const nx = 48, ny = 40, dt = 60;
const blobs = randomBlobs(nx, ny, 20, 3);
const pair = scenePair((x, y) => blobField(blobs, x, y), translation(0.2 / dt, 0.1 / dt), nx, ny, 0.36, 0.36, dt);

function refusal(f: () => unknown): InputError {
  try { f(); } catch (e) { if (e instanceof InputError) return e; throw e; }
  throw new Error('expected an InputError, got a result');
}

describe('velocity inference refuses bad input with an InputError', () => {
  it('frames of different shape', () => {
    const b: Frame = { ...pair.b, nx: 40, ny: 48 };
    const e = refusal(() => inferVelocity(pair.a, b));
    expect(e.source).toBe('scene-b');
    expect(e.field).toBe('nx/ny');
    expect(e.message).toMatch(/40x48 but scene-a is 48x40/);
  });

  it('frames of different pixel size', () => {
    const e = refusal(() => inferVelocity(pair.a, { ...pair.b, dx: 0.5 }));
    expect(e.field).toBe('dx/dy');
    expect(e.message).toMatch(/0\.5 x 0\.36 Mm/);
  });

  it('dt <= 0: same time or the second frame earlier', () => {
    for (const time of [pair.a.time, pair.a.time - 60_000]) {
      const e = refusal(() => inferVelocity(pair.a, { ...pair.b, time }));
      expect(e.field).toBe('time');
      expect(e.message).toMatch(/dt > 0/);
    }
  });

  it('frames further apart than the configured interval', () => {
    const e = refusal(() => inferVelocity(pair.a, pair.b, { maxIntervalS: 59 }));
    expect(e.field).toBe('time');
    expect(e.message).toMatch(/60 s after scene-a, more than the 59 s allowed/);
    // the default (1800 s) takes the 60 s pair, and refuses one 2 hours apart
    expect(inferVelocity(pair.a, pair.b).validFraction).toBeGreaterThan(0);
    expect(refusal(() => inferVelocity(pair.a, { ...pair.b, time: pair.a.time + 7200_000 })).field).toBe('time');
  });

  it('all-NaN frames', () => {
    const nan = new Float64Array(nx * ny).fill(NaN);
    expect(refusal(() => inferVelocity({ ...pair.a, bn: nan }, pair.b)).field).toBe('bn');
    expect(refusal(() => inferVelocity(pair.a, { ...pair.b, bn: nan })).source).toBe('scene-b');
  });

  it('a field everywhere below the threshold gives an error, not zero velocity', () => {
    for (const method of ['dave', 'lct'] as const) {
      const zero = new Float64Array(nx * ny);
      const e = refusal(() => inferVelocity({ ...pair.a, bn: zero }, { ...pair.b, bn: zero }, { method }));
      expect(e.message).toMatch(/no pixel gave a velocity/);
    }
    const e = refusal(() => inferVelocity(pair.a, pair.b, { threshold: { unit: 'G', value: 1e6 } }));
    expect(e.message).toMatch(/refusing to report zero velocity/);
  });

  it('dave4vm without the horizontal field, and bad settings', () => {
    expect(refusal(() => inferVelocity(pair.a, pair.b, { method: 'dave4vm' })).field).toBe('bx/by');
    expect(refusal(() => inferVelocity(pair.a, pair.b, { sigma: 0 })).field).toBe('sigma');
    expect(refusal(() => inferVelocity(pair.a, pair.b, { stride: 1.5 })).field).toBe('stride');
    expect(refusal(() => inferVelocity(pair.a, pair.b, { method: 'flct' as never })).field).toBe('method');
    expect(refusal(() => inferVelocity(pair.a, pair.b, { threshold: { unit: 'noise', value: 3, noise: -1 } })).field).toBe('threshold.noise');
  });

  it('NaN pixels give NaN velocity around them, never zero, and the valid share says so', () => {
    const holed = Float64Array.from(pair.b.bn);
    for (let y = 18; y < 22; y++) for (let x = 20; x < 24; x++) holed[y * nx + x] = NaN;
    for (const method of ['dave', 'lct'] as const) {
      const full = inferVelocity(pair.a, pair.b, { method });
      const r = inferVelocity(pair.a, { ...pair.b, bn: holed }, { method });
      expect(Number.isNaN(r.vx[20 * nx + 21]), method).toBe(true);
      expect(Number.isNaN(r.vy[20 * nx + 21]), method).toBe(true);
      expect(r.validFraction, method).toBeLessThan(full.validFraction);
      for (let i = 0; i < nx * ny; i++) if (r.vx[i] === 0 && r.vy[i] === 0) throw new Error(`${method}: exact zero velocity at ${i}`);
    }
  });

  it('noise units: the threshold is the given multiple of the given or estimated noise', () => {
    const given = inferVelocity(pair.a, pair.b, { threshold: { unit: 'noise', value: 4, noise: 25 } });
    expect(given.thresholdG).toBe(100);
    const est = inferVelocity(pair.a, pair.b, { threshold: { unit: 'noise', value: 4 } });
    expect(est.notes.join(' ')).toMatch(/Noise level estimated/);
    expect(est.thresholdG).toBeGreaterThanOrEqual(0);
  });
});
