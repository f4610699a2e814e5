import { describe, expect, it } from 'vitest';
import type { FootpointAnalysis } from '../../core/footpoints/analyseFootpoints.js';
import { analyseFootpoints } from '../../core/footpoints/analyseFootpoints.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Spot } from './scene.js';
import { sceneFrame, spotFlux, spotVelocity } from './scene.js';

// Analytic truths from the helicity-flux formula of Berger & Field (1984) /
// Pariat, Demoulin & Berger (2005) split as in Longcope, Ravindra & Barnes (2007):
//   a footpoint of flux Phi spinning at omega: spin = -(omega/2pi) Phi^2;
//   two compact footpoints circling each other at Omega: orbit = -(1/pi) Phi_1 Phi_2 Omega.
// Phi below is the total flux of each synthetic Gaussian spot, not the segmented one: the threshold
// (5 G on peaks of 1200-2000 G) leaves out a share eps = threshold/peak < 0.5 % of a Gaussian's flux.
const DT = 60_000;
const deg = Math.PI / 180;
const near = (x: number, y: number, r: FootpointAnalysis) => r.footpoints.reduce((b, f) => (Math.hypot(f.x - x, f.y - y) < Math.hypot(b.x - x, b.y - y) ? f : b));

describe('spin of a spinning elliptical spot beside a static opposite spot', () => {
  const grid = { nx: 120, ny: 72, dx: 0.4, dy: 0.4 };
  const omega = (2 * deg) / 60; // rad/s
  const spinning = (k: number): Spot => ({ x: 12, y: 14, a: 2.4, b: 1.2, angle: 0.3 + omega * 60 * k, peak: 2000 });
  const still: Spot = { x: 30, y: 14, a: 1.6, b: 1.6, angle: 0, peak: -2000 };
  const truth = (-omega / (2 * Math.PI)) * spotFlux(spinning(0)) ** 2;
  const cache: FluxKernelCache = new Map();

  it('from tracking alone (pattern rotation, point estimate): within 5 % of -(omega/2pi) Phi^2', () => {
    const r0 = analyseFootpoints(undefined, sceneFrame(grid, 0, [spinning(0), still], 1, 1));
    const r1 = analyseFootpoints(r0.state, sceneFrame(grid, DT, [spinning(1), still], 1, 2));
    const p = near(12, 14, r1), q = near(30, 14, r1);
    expect(r1.footpoints).toHaveLength(2);
    expect(p.omegaSource).toBe('pattern');
    expect(Math.abs(p.spinPoint! / truth - 1)).toBeLessThan(0.05);
    // The still round spot shows no rotation from its pattern: left out, not guessed.
    expect(q.patternNote).toBe('axisymmetric');
    expect(r1.point.spin).toBe(p.spinPoint);
    // Neither centroid moves (but for noise jitter of a thousandth of a pixel), so the pair hardly orbits.
    expect(Math.abs(r1.point.orbit)).toBeLessThan(1e-2 * Math.abs(truth));
    expect(r1.exact).toBeNull();
    expect(r1.flags).toContain('no-velocity');
  });

  it('with the velocity field: exact split within 5 % of the truth and of the point estimate', () => {
    // Rigid rotation about the spot's centre on the left half, rest at rest.
    const v = (k: number) => {
      const m = spotVelocity(grid, [{ spot: spinning(k), vx: 0, vy: 0, omega, reach: 9 }]);
      for (let i = 0; i < m.vx.length; i++) if ((i % grid.nx) * grid.dx > 21) { m.vx[i] = 0; m.vy[i] = 0; }
      return m;
    };
    const f0 = { ...sceneFrame(grid, 0, [spinning(0), still], 1, 1), ...v(0) };
    const r = analyseFootpoints(undefined, f0, { kernelCache: cache });
    const p = near(12, 14, r), q = near(30, 14, r);
    expect(p.omegaSource).toBe('velocity');
    expect(p.omegaVelocity! / omega).toBeCloseTo(1, 6);
    expect(q.omegaVelocity!).toBeCloseTo(0, 12);
    expect(Math.abs(p.spinExact! / truth - 1)).toBeLessThan(0.05);
    expect(Math.abs(p.spinExact! / p.spinPoint! - 1)).toBeLessThan(0.05);
    expect(Math.abs(q.spinExact!)).toBeLessThan(1e-6 * Math.abs(truth));
    // spin + orbit + background is the G_theta total (core/labelSplit.ts).
    const e = r.exact!;
    expect(Math.abs(e.spin + e.orbit + e.background - e.total)).toBeLessThan(1e-9 * Math.abs(truth));
    expect(cache.size).toBe(1);
  });
});

describe('orbit of a circling pair', () => {
  const grid = { nx: 120, ny: 100, dx: 0.4, dy: 0.4 };
  const Omega = (3 * deg) / 60;
  const R = 6, cx = 24, cy = 20;
  const pair = (k: number): Spot[] => {
    const t = Omega * 60 * k;
    return [
      { x: cx + R * Math.cos(t), y: cy + R * Math.sin(t), a: 1.4, b: 1.4, angle: 0, peak: 1500 },
      { x: cx - R * Math.cos(t), y: cy - R * Math.sin(t), a: 1.4, b: 1.4, angle: 0, peak: -1200 },
    ];
  };
  const [s1, s2] = pair(0);
  const truth = (-1 / Math.PI) * spotFlux(s1) * spotFlux(s2) * Omega;

  it('from tracking alone: within 2 % of -(1/pi) Phi_1 Phi_2 Omega', () => {
    let state;
    for (let k = 0; k < 4; k++) {
      const r = analyseFootpoints(state, sceneFrame(grid, k * DT, pair(k), 1, 10 + k));
      state = r.state;
      if (k === 0) continue;
      expect(r.footpoints.every((f) => f.motionSource === 'tracking')).toBe(true);
      expect(Math.abs(r.point.orbit / truth - 1)).toBeLessThan(0.02);
      expect(r.pairs[0].orbitPoint).toBe(r.point.orbit);
    }
  });

  it('with the velocity field: exact orbit within 2 % of the truth, and within 5 % of the point estimate', () => {
    const [a, b] = pair(0);
    // Each spot translates with its centre: v = Omega z x (c - centre), km/s.
    const vel = spotVelocity(grid, [
      { spot: a, vx: -Omega * (a.y - cy) * 1000, vy: Omega * (a.x - cx) * 1000, omega: 0, reach: 5.9 },
      { spot: b, vx: -Omega * (b.y - cy) * 1000, vy: Omega * (b.x - cx) * 1000, omega: 0, reach: 5.9 },
    ]);
    const r = analyseFootpoints(undefined, sceneFrame(grid, 0, pair(0), 1, 3), {}, vel);
    const e = r.exact!;
    expect(Math.abs(e.orbit / truth - 1)).toBeLessThan(0.02);
    expect(Math.abs(e.orbit / r.point.orbit - 1)).toBeLessThan(0.05);
    expect(r.pairs[0].orbitExact).toBe(e.orbit);
    // Translation without turning: each spot's own spin is nil next to the orbit.
    expect(Math.abs(e.spin)).toBeLessThan(1e-3 * Math.abs(e.orbit));
    const m = r.pairMatrix;
    expect(m.ids).toHaveLength(2);
    expect(m.orbitExact![1]).toBe(m.orbitExact![2]);
  });
});

describe('exact split and point estimate on several well separated footpoints', () => {
  // Four spots of both signs, each translating and spinning at its own rate (our own scene).
  const grid = { nx: 128, ny: 128, dx: 0.4, dy: 0.4 };
  const parts = [
    { spot: { x: 12, y: 12, a: 1.6, b: 1.1, angle: 0.2, peak: 1500 }, vx: 0.4, vy: -0.2, omega: 3e-4 },
    { spot: { x: 38, y: 14, a: 1.3, b: 1.3, angle: 0, peak: -1100 }, vx: -0.3, vy: 0.5, omega: -2e-4 },
    { spot: { x: 14, y: 38, a: 1.5, b: 1.2, angle: 1.0, peak: -1300 }, vx: 0.1, vy: 0.3, omega: 1e-4 },
    { spot: { x: 39, y: 39, a: 1.2, b: 1.2, angle: 0, peak: 900 }, vx: -0.5, vy: -0.4, omega: -4e-4 },
  ];
  const vel = spotVelocity(grid, parts.map((p) => ({ ...p, reach: 7 })));
  const r = analyseFootpoints(undefined, sceneFrame(grid, 0, parts.map((p) => p.spot), 1, 21), {}, vel);

  it('per footpoint spin and per pair orbit agree within 5 %', () => {
    expect(r.footpoints).toHaveLength(4);
    for (const p of parts) {
      const f = near(p.spot.x, p.spot.y, r);
      expect(f.omegaVelocity! / p.omega).toBeCloseTo(1, 6);
      expect(Math.abs(f.spinExact! / f.spinPoint! - 1)).toBeLessThan(0.05);
      // and the spin is the analytic one of a spinning footpoint, -(omega/2pi) Phi^2
      expect(Math.abs(f.spinExact! / ((-p.omega / (2 * Math.PI)) * spotFlux(p.spot) ** 2) - 1)).toBeLessThan(0.05);
    }
    const { ids, orbitExact, orbitPoint } = r.pairMatrix;
    const K = ids.length;
    let largest = 0;
    for (let i = 0; i < K; i++) for (let j = i + 1; j < K; j++) largest = Math.max(largest, Math.abs(orbitExact![i * K + j]));
    for (let i = 0; i < K; i++) {
      for (let j = i + 1; j < K; j++) {
        const e = orbitExact![i * K + j], p = orbitPoint[i * K + j];
        // Each pair within 5 % of itself, or (for pairs whose orbit nearly vanishes) within 1 % of the largest.
        expect(Math.abs(e - p)).toBeLessThan(Math.max(0.05 * Math.abs(e), 0.01 * largest));
      }
    }
    expect(Math.abs(r.exact!.orbit / r.point.orbit - 1)).toBeLessThan(0.05);
    expect(Math.abs(r.exact!.spin / r.point.spin - 1)).toBeLessThan(0.05);
    expect(r.pairs[0].orbitExact).toBe(r.pairs.reduce((m, q) => (Math.abs(q.orbitExact!) > Math.abs(m) ? q.orbitExact! : m), 0));
  });
});

describe('a footpoint turning differentially', () => {
  // Axisymmetric Gaussian footpoint (width s) with omega(r) = omega0 exp(-r^2 / 2 L^2). From the
  // formula (Pariat, Demoulin & Berger 2005): a pixel pair turns on average at the rate of its outer pixel, so
  // spin = -(1/pi) Int omega(r) Phi(<r) dPhi(r) = -(omega0 Phi^2 / pi) / ((1 + a)(2 + a)), a = s^2/L^2
  // (our derivation; -(omega0/2pi) Phi^2 for a = 0). With L = s the effective rate is omega0/3,
  // where a mean weighted by |Bn| r^2 would give omega0/4 and one weighted by |Bn| alone omega0/2.
  const grid = { nx: 96, ny: 96, dx: 0.3, dy: 0.3 };
  const spot = { x: 14, y: 14.2, a: 1.8, b: 1.8, angle: 0, peak: 1800 };
  const omega0 = 5e-4, L = spot.a, alpha = (spot.a / L) ** 2;
  const n = grid.nx * grid.ny;
  const vx = new Float64Array(n), vy = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const X = (i % grid.nx) * grid.dx - spot.x, Y = Math.floor(i / grid.nx) * grid.dy - spot.y;
    const w = omega0 * Math.exp(-(X * X + Y * Y) / (2 * L * L));
    vx[i] = -w * Y * 1000;
    vy[i] = w * X * 1000;
  }
  const truth = (-omega0 * spotFlux(spot) ** 2 / Math.PI) / ((1 + alpha) * (2 + alpha));

  it('exact spin and point spin (enclosed-flux weighted omega) both within 5 % of the analytic spin', () => {
    const r = analyseFootpoints(undefined, sceneFrame(grid, 0, [spot], 1, 8), {}, { vx, vy });
    const f = r.footpoints[0];
    expect(r.footpoints).toHaveLength(1);
    expect(Math.abs(f.spinExact! / truth - 1)).toBeLessThan(0.05);
    expect(Math.abs(f.spinPoint! / truth - 1)).toBeLessThan(0.05);
    expect(Math.abs(f.omegaVelocity! / (omega0 / 3) - 1)).toBeLessThan(0.05);
  });
});
