import { describe, expect, it } from 'vitest';
import type { FootpointAnalysis, FootpointState } from '../../core/footpoints/analyseFootpoints.js';
import { analyseFootpoints } from '../../core/footpoints/analyseFootpoints.js';
import { angleStep } from '../../core/footpoints/pairWinding.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Spot } from './scene.js';
import { sceneFrame, spotFlux, spotVelocity } from './scene.js';

// Two closed flux tubes with linking number Lk carry H = 2 Lk Phi_1 Phi_2 (Moffatt 1969): n full
// counter-clockwise turns of two same-sign footpoints about each other inject -2 n Phi_1 Phi_2
// (sign convention of DEVELOPERS.md, Conventions: counter-clockwise seen from the corona, positive = right-handed).
// The scene is our own: two positive spots circling their midpoint, 36 frames a turn, 3 turns.
const grid = { nx: 64, ny: 64, dx: 0.5, dy: 0.5 };
const DT = 60_000;
const TURNS = 3, PER_TURN = 36;
const Omega = (2 * Math.PI) / (PER_TURN * 60); // rad/s
const R = 5, cx = 16, cy = 16;
const pair = (k: number): Spot[] => {
  const t = Omega * 60 * k;
  return [
    { x: cx + R * Math.cos(t), y: cy + R * Math.sin(t), a: 1.2, b: 1.2, angle: 0, peak: 1400 },
    { x: cx - R * Math.cos(t), y: cy - R * Math.sin(t), a: 1.2, b: 1.2, angle: 0, peak: 1000 },
  ];
};
const phi1 = spotFlux(pair(0)[0]), phi2 = spotFlux(pair(0)[1]);

function run(withVelocity: boolean): FootpointAnalysis[] {
  const cache: FluxKernelCache = new Map();
  const out: FootpointAnalysis[] = [];
  let state: FootpointState | undefined;
  for (let k = 0; k <= TURNS * PER_TURN; k++) {
    const spots = pair(k);
    const frame = sceneFrame(grid, k * DT, spots, 1, 50 + k);
    const vel = withVelocity
      ? spotVelocity(grid, spots.map((s) => ({ spot: s, vx: -Omega * (s.y - cy) * 1000, vy: Omega * (s.x - cx) * 1000, omega: 0, reach: 4.9 })))
      : undefined;
    const r = analyseFootpoints(state, frame, { kernelCache: cache }, vel);
    out.push(r);
    state = r.state;
  }
  return out;
}

describe('winding of two same-sign footpoints over three full turns', () => {
  it('tracking alone: the winding counts 3 turns and the orbit budget is -2 n Phi_1 Phi_2 within 2 %', () => {
    const seq = run(false);
    const last = seq[seq.length - 1];
    expect(seq.every((r) => r.footpoints.length === 2 && r.events.length === 0)).toBe(true);
    const [a, b] = last.pairMatrix.ids;
    expect(last.pairMatrix.windingTurns[1]).toBeCloseTo(TURNS, 3);
    expect(last.pairs[0].windingTurns).toBeCloseTo(TURNS, 3);
    // Half way the count is half.
    expect(seq[(TURNS * PER_TURN) / 2].pairs[0].windingTurns).toBeCloseTo(TURNS / 2, 3);
    const truth = -2 * TURNS * phi1 * phi2;
    const stored = last.state.pairs.find((p) => p.a === a && p.b === b)!;
    expect(stored.steps).toBe(TURNS * PER_TURN);
    expect(Math.abs(stored.orbitBudget / truth - 1)).toBeLessThan(0.02);
    expect(Math.abs(last.state.budget.orbitPoint / truth - 1)).toBeLessThan(0.02);
    expect(last.state.budget.secondsPoint).toBeCloseTo(TURNS * PER_TURN * 60, 6);
  });

  it('with the velocity field: the exact orbit budget is -2 n Phi_1 Phi_2 within 2 % as well', () => {
    const seq = run(true);
    const last = seq[seq.length - 1];
    const truth = -2 * TURNS * phi1 * phi2;
    expect(Math.abs(last.state.budget.orbitExact / truth - 1)).toBeLessThan(0.02);
    expect(last.pairs[0].windingTurns).toBeCloseTo(TURNS, 3);
  });

  it('clockwise turns count negative', () => {
    expect(angleStep(0.1, -0.1)).toBeCloseTo(-0.2, 12);
    expect(angleStep(Math.PI - 0.05, -Math.PI + 0.05)).toBeCloseTo(0.1, 12);
    expect(angleStep(-Math.PI + 0.05, Math.PI - 0.05)).toBeCloseTo(-0.1, 12);
  });
});

describe('bounding the winding bookkeeping', () => {
  it('follows only pairs among the windingFootpoints largest footpoints', () => {
    const spots: Spot[] = [
      { x: 8, y: 8, a: 1.2, b: 1.2, angle: 0, peak: 1500 }, { x: 24, y: 8, a: 1.2, b: 1.2, angle: 0, peak: -900 },
      { x: 8, y: 24, a: 1.2, b: 1.2, angle: 0, peak: 600 },
    ];
    const r0 = analyseFootpoints(undefined, sceneFrame(grid, 0, spots, 1, 1), { windingFootpoints: 2 });
    const r1 = analyseFootpoints(r0.state, sceneFrame(grid, DT, spots.map((s) => ({ ...s, x: s.x + 0.3 })), 1, 2), { windingFootpoints: 2 });
    expect(r1.footpoints).toHaveLength(3);
    expect(r1.state.pairs).toHaveLength(1);
    const weakest = r1.footpoints.reduce((m, f) => (Math.abs(f.flux) < Math.abs(m.flux) ? f : m));
    expect(r1.state.pairs.some((p) => p.a === weakest.id || p.b === weakest.id)).toBe(false);
    expect(r1.pairs.filter((p) => p.windingTurns === null)).toHaveLength(2);
  });
});
