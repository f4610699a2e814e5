// The vector-magnetogram estimator on an imposed flow with a normal velocity: every map translates
// at U and the normal velocity is a uniform W. Then
//   Bz(x, t) = Bz0(x - U t) + t W D0(x - U t),  Bh(x, t) = Bh0(x - U t),  D0 = div Bh0,
// solves dBz/dt + div(Bz U - W Bh) = 0 exactly (substitute: both sides give -U.grad Bz0 + W D0 - t W U.grad D0).
import { describe, expect, it } from 'vitest';
import type { Frame } from '../../core/frame.js';
import { inferVelocity } from '../../core/velocity/inferVelocity.js';
import { KM_PER_MM } from '../../core/units.js';
import { randomBlobs } from './scenes.js';

const nx = 64, ny = 64, dx = 0.36, dy = 0.36, dt = 60;
const blobs = randomBlobs(nx, ny, 40, 11);

/** Bz0, a fanning horizontal field Bh0 (radial from each element, 0.8 of its Bz scale) and D0 (G/Mm). */
function fields(x: number, y: number): { bz: number; bx: number; by: number; div: number } {
  let bz = 0, bx = 0, by = 0, div = 0;
  for (const p of blobs) {
    const ex = x - p.x, ey = y - p.y, w = p.w;
    const g = Math.exp(-(ex * ex + ey * ey) / (2 * w * w));
    bz += p.b * g;
    const h = 0.8 * p.b / w;
    bx += h * ex * g;
    by += h * ey * g;
    // d/dx (h ex g) per pixel = h g (1 - ex^2/w^2); per Mm divide by dx (dy).
    div += (h * g * (1 - (ex * ex) / (w * w))) / dx + (h * g * (1 - (ey * ey) / (w * w))) / dy;
  }
  return { bz, bx, by, div };
}

function vectorPair(ux: number, uy: number, wMmPerS: number): { a: Frame; b: Frame } {
  const at = (t: number, time: number, source: string): Frame => {
    const n = nx * ny;
    const bn = new Float64Array(n), bxm = new Float64Array(n), bym = new Float64Array(n);
    for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
      const f = fields(x - ux * t, y - uy * t);
      const i = y * nx + x;
      bn[i] = f.bz + t * wMmPerS * f.div;
      bxm[i] = f.bx; bym[i] = f.by;
    }
    return { nx, ny, dx, dy, time, bn, bx: bxm, by: bym, provenance: { source } };
  };
  const t0 = Date.UTC(2026, 2, 14, 6);
  return { a: at(-dt / 2, t0, 'vector-a'), b: at(dt / 2, t0 + dt * 1000, 'vector-b') };
}

describe('vector-magnetogram affine estimator (dave4vm)', () => {
  it('recovers a translation with a uniform normal velocity where the field is strong', () => {
    const ux = 0.25 / dt, uy = 0.15 / dt; // px/s
    const w = 0.4 / KM_PER_MM; // 0.4 km/s upward, in Mm/s
    const { a, b } = vectorPair(ux, uy, w);
    const r = inferVelocity(a, b); // auto: both frames carry bx, by
    expect(r.method).toBe('dave4vm');
    expect(r.vz).toBeDefined();
    const vxTrue = ux * dx * KM_PER_MM, vyTrue = uy * dy * KM_PER_MM;
    let count = 0, worstH = 0, worstZ = 0;
    for (let y = 8; y < ny - 8; y++) for (let x = 8; x < nx - 8; x++) {
      const i = y * nx + x;
      const f = fields(x, y);
      if (Math.hypot(f.bz, f.bx, f.by) < 300) continue;
      count++;
      // Source: the imposed flow (exact solution above).
      worstH = Math.max(worstH, Math.hypot(r.vx[i] - vxTrue, r.vy[i] - vyTrue) / Math.hypot(vxTrue, vyTrue));
      worstZ = Math.max(worstZ, Math.abs(r.vz![i] - 0.4) / 0.4);
    }
    expect(count).toBeGreaterThan(500);
    expect(worstH).toBeLessThan(0.05);
    expect(worstZ).toBeLessThan(0.05);
    expect(r.notes.join(' ')).toMatch(/plasma velocity/);
  });

  it('without vz in the flow, finds vz near 0 and the same horizontal flow as dave', () => {
    const { a, b } = vectorPair(0.3 / dt, -0.1 / dt, 0);
    const r4 = inferVelocity(a, b, { method: 'dave4vm' });
    const r2 = inferVelocity({ ...a, bx: undefined, by: undefined }, { ...b, bx: undefined, by: undefined });
    expect(r2.method).toBe('dave');
    expect(r2.vz).toBeUndefined();
    const vTrue = Math.hypot(0.3, 0.1) * dx * KM_PER_MM / dt;
    let count = 0;
    for (let y = 8; y < ny - 8; y++) for (let x = 8; x < nx - 8; x++) {
      const i = y * nx + x;
      if (Math.abs(fields(x, y).bz) < 300) continue;
      count++;
      expect(Math.abs(r4.vz![i])).toBeLessThan(0.05 * vTrue);
      expect(Math.hypot(r4.vx[i] - r2.vx[i], r4.vy[i] - r2.vy[i])).toBeLessThan(0.05 * vTrue);
    }
    expect(count).toBeGreaterThan(500);
  });
});

describe('dave4vm output in the convention of core/fluxTransport.ts', () => {
  it('fluxTransport(midFrame, v) is the true Bn v_t - v_n B_t where the field is strong', async () => {
    const { midFrame } = await import('../../core/velocity/midFrame.js');
    const { fluxTransport } = await import('../../core/fluxTransport.js');
    const ux = 0.2 / dt, uy = -0.15 / dt, w = 0.5 / KM_PER_MM;
    const { a, b } = vectorPair(ux, uy, w);
    const v = inferVelocity(a, b);
    const mid = midFrame(a, b);
    const t = fluxTransport(mid, v);
    expect(t.fromVectorData).toBe(true);
    const vx = ux * dx * KM_PER_MM, vy = uy * dy * KM_PER_MM, vz = 0.5;
    let count = 0, worst = 0, scale = 0;
    for (let i = 0; i < nx * ny; i++) scale = Math.max(scale, Math.hypot(mid.bn[i] * vx, mid.bn[i] * vy));
    for (let y = 8; y < ny - 8; y++) for (let x = 8; x < nx - 8; x++) {
      const i = y * nx + x;
      if (!Number.isFinite(v.vx[i]) || Math.hypot(mid.bn[i], mid.bx![i], mid.by![i]) < 300) continue;
      count++;
      // Truth: the flux of the imposed flow, Bz V - vz Bh (the equation solved in vectorPair).
      const fx = mid.bn[i] * vx - vz * mid.bx![i], fy = mid.bn[i] * vy - vz * mid.by![i];
      worst = Math.max(worst, Math.hypot(t.fx[i] - fx, t.fy[i] - fy) / scale);
    }
    expect(count).toBeGreaterThan(500);
    expect(worst).toBeLessThan(0.05);
  });
});

describe('midFrame', () => {
  it('averages the maps and the times, and keeps bx, by only when both frames have them', async () => {
    const { midFrame } = await import('../../core/velocity/midFrame.js');
    const { a, b } = vectorPair(0.3 / dt, 0, 0);
    const m = midFrame(a, b);
    expect(m.time).toBe((a.time + b.time) / 2);
    expect(m.bn[100]).toBeCloseTo(0.5 * (a.bn[100] + b.bn[100]), 12);
    expect(m.bx![100]).toBeCloseTo(0.5 * (a.bx![100] + b.bx![100]), 12);
    expect(midFrame(a, { ...b, bx: undefined, by: undefined }).bx).toBeUndefined();
    expect(m.provenance?.source).toBe('vector-a + vector-b');
  });
});
