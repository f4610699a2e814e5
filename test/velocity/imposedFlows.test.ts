// Imposed flows of our own, advected into a second frame by the normal-field evolution equation
// (exact solutions along the trajectories, see scenes.ts). Tolerances here are the ones
// docs/velocity.md documents.
import { describe, expect, it } from 'vitest';
import { inferVelocity } from '../../core/velocity/inferVelocity.js';
import { windowRadius } from '../../core/velocity/windowedSum.js';
import { KM_PER_MM } from '../../core/units.js';
import type { Flow } from './scenes.js';
import { blobField, divergence, flowErrors, quantile, randomBlobs, rotation, scenePair, shear, translation } from './scenes.js';

const nx = 64, ny = 64, dt = 60;
const blobs = randomBlobs(nx, ny, 40, 7);
const field = (x: number, y: number) => blobField(blobs, x, y);
// Displacements per pair of at most ~0.35 px inside the grid: the affine estimator is differential.
const flows: Flow[] = [
  translation(0.3 / dt, -0.2 / dt),
  rotation(0.01 / dt, 32, 32),
  shear(0.01 / dt, 32),
  divergence(0.008 / dt, 32, 32),
];
const STRONG = 300; // G: "where the field is strong" (peaks are 600-1500 G)

function selection(p: ReturnType<typeof scenePair>, margin: number) {
  let maxU = 0;
  for (let i = 0; i < p.ux.length; i++) maxU = Math.max(maxU, Math.hypot(p.ux[i], p.uy[i]));
  return (i: number) => {
    const x = i % nx, y = (i - x) / nx;
    return x >= margin && y >= margin && x < nx - margin && y < ny - margin
      && Math.abs(p.mid[i]) >= STRONG && Math.hypot(p.ux[i], p.uy[i]) >= 0.2 * maxU;
  };
}

describe('differential affine velocity estimator on imposed flows', () => {
  for (const flow of flows) {
    it(`${flow.name}: within 5% in speed and 5 degrees in direction where |Bn| >= ${STRONG} G`, () => {
      const p = scenePair(field, flow, nx, ny, 0.36, 0.36, dt);
      const r = inferVelocity(p.a, p.b, { method: 'dave', sigma: 4 });
      expect(r.method).toBe('dave');
      // Windows at least 2 sigma inside the grid (the field outside the grid is unknown).
      const e = flowErrors(r.vx, r.vy, p.ux, p.uy, selection(p, 8));
      expect(e.count).toBeGreaterThan(500);
      expect(e.masked).toBe(0);
      // Source: the imposed flow itself (exact solution of dBn/dt + div(Bn u) = 0).
      expect(Math.max(...e.speed)).toBeLessThan(0.05);
      expect(Math.max(...e.angle)).toBeLessThan(5);
      expect(quantile(e.speed, 0.5)).toBeLessThan(0.01);
    });
  }

  it('unequal pixel sides (0.4 x 0.3 Mm): translation in km/s per axis', () => {
    const p = scenePair(field, translation(0.25 / dt, 0.2 / dt), nx, ny, 0.4, 0.3, dt);
    const r = inferVelocity(p.a, p.b, { method: 'dave' });
    const e = flowErrors(r.vx, r.vy, p.ux, p.uy, selection(p, 8));
    expect(e.count).toBeGreaterThan(500);
    // Truth: 0.25 px/min * 400 km/px = 1.667 km/s along x, 0.2 px/min * 300 km/px = 1 km/s along y.
    expect(p.ux[0]).toBeCloseTo((0.25 * 0.4 * KM_PER_MM) / dt, 12);
    expect(Math.max(...e.speed)).toBeLessThan(0.05);
    expect(Math.max(...e.angle)).toBeLessThan(5);
  });
});

describe('local correlation tracking on imposed flows', () => {
  const margin = windowRadius(4); // windows wholly inside the grid
  it('uniform translation: within 5% and 5 degrees at every strong pixel', () => {
    const p = scenePair(field, flows[0], nx, ny, 0.36, 0.36, dt);
    const r = inferVelocity(p.a, p.b, { method: 'lct', sigma: 4, stride: 4 });
    const e = flowErrors(r.vx, r.vy, p.ux, p.uy, selection(p, margin));
    expect(e.count).toBeGreaterThan(400);
    expect(e.masked).toBe(0);
    expect(Math.max(...e.speed)).toBeLessThan(0.05);
    expect(Math.max(...e.angle)).toBeLessThan(5);
  });
  // A window reports the motion of the features inside it, not of its centre: with a velocity
  // gradient A the error is about A times the offset of the features from the centre (of order
  // sigma), so non-uniform flows are recovered only to this looser tolerance.
  for (const flow of flows.slice(1)) {
    it(`${flow.name}: median within 10% and 7 degrees, 90% within 25% and 15 degrees`, () => {
      const p = scenePair(field, flow, nx, ny, 0.36, 0.36, dt);
      const r = inferVelocity(p.a, p.b, { method: 'lct', sigma: 4, stride: 4 });
      const e = flowErrors(r.vx, r.vy, p.ux, p.uy, selection(p, margin));
      expect(e.count).toBeGreaterThan(300);
      expect(quantile(e.speed, 0.5)).toBeLessThan(0.1);
      expect(quantile(e.angle, 0.5)).toBeLessThan(7);
      expect(quantile(e.speed, 0.9)).toBeLessThan(0.25);
      expect(quantile(e.angle, 0.9)).toBeLessThan(15);
    });
  }
});
