// The pipeline's per-frame step: given velocities or inferred ones, footpoints found and tracked,
// and the rate split checked against the analytic circling pair (Berger & Field 1984:
// dH/dt = -(1/pi) Phi1 Phi2 Omega).
import { describe, expect, it } from 'vitest';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Frame } from '../../core/frame.js';
import type { AnalysisState } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { labelFlux, spotFrame } from '../support/scenes.js';

const Omega = 2 * Math.PI / (6 * 3600); // a turn in six hours
const cx = 24, cy = 24, R = 6, d = 0.5, cadence = 120;

function circling(step: number): Frame {
  const a = Omega * step * cadence;
  const spot = (phase: number, peak: number) => {
    const x = cx + R * Math.cos(a + phase), y = cy + R * Math.sin(a + phase);
    return { x, y, peak, sigma: 1.2, vx: -Omega * 1000 * (y - cy), vy: Omega * 1000 * (x - cx) };
  };
  return spotFrame(96, 96, d, [spot(0, 1200), spot(Math.PI, -1000)], Date.parse('2026-05-02T10:00:00Z') + step * cadence * 1000);
}

describe('analyseFrame', () => {
  it('with given velocities: a sample at the frame time, two tracked footpoints, orbit = -(1/pi) Phi1 Phi2 Omega within 2%', () => {
    const cache: FluxKernelCache = new Map();
    let state: AnalysisState = {};
    const ids: number[][] = [];
    let last;
    for (let s = 0; s < 4; s++) {
      const f = circling(s);
      const { labels: _l, ...frame } = f;
      last = analyseFrame(frame, state, { noiseG: 1 }, cache);
      state = last.state;
      expect(last.sample!.time).toBe(frame.time);
      ids.push(last.footpoints!.footpoints.map((r) => r.id));
    }
    expect(ids.every((x) => JSON.stringify(x) === JSON.stringify(ids[0]))).toBe(true);
    expect(ids[0]).toHaveLength(2);
    const f = circling(3);
    const expected = (-1 / Math.PI) * labelFlux(f, 1) * labelFlux(f, 2) * Omega;
    expect(Math.abs(last!.sample!.orbit - expected) / Math.abs(expected)).toBeLessThan(0.02);
    expect(last!.sample!.splitMethod).toBe('labels');
    // Two footpoints: their one pair carries the whole orbit, and no pixel is left to the background
    // beyond rounding (the pair's tails belong to them).
    expect(last!.footpoints!.pairs[0].orbitExact! / last!.sample!.orbit).toBeCloseTo(1, 12);
    expect(Math.abs(last!.sample!.background)).toBeLessThan(0.02 * Math.abs(expected));
  });

  it('without velocities: the first frame waits, then samples at mid-times from the inferred velocity, within 10% of the truth', () => {
    const cache: FluxKernelCache = new Map();
    let state: AnalysisState = {};
    const strip = (f: Frame): Frame => ({ time: f.time, nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy, bn: f.bn });
    const first = analyseFrame(strip(circling(0)), state, {}, cache);
    expect(first.sample).toBeUndefined();
    expect(first.waiting).toMatch(/waiting/);
    state = first.state;
    const second = analyseFrame(strip(circling(1)), state, {}, cache);
    expect(second.sample!.time).toBe((circling(0).time + circling(1).time) / 2);
    expect(second.sample!.dtS).toBe(cadence);
    expect(second.sample!.velocityMethod).toBe('dave');
    expect(second.velocityNotes.join(' ')).toMatch(/axisymmetric/);
    const f = circling(0.5);
    const expected = (-1 / Math.PI) * labelFlux(f, 1) * labelFlux(f, 2) * Omega;
    expect(Math.abs(second.sample!.total - expected) / Math.abs(expected)).toBeLessThan(0.1);
    expect(second.footpoints!.footpoints).toHaveLength(2);
  });

  it('frames too far apart for inference give no sample for that pair, and the next pair starts from the later frame', () => {
    const strip = (f: Frame, t: number): Frame => ({ time: t, nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy, bn: f.bn });
    const t0 = circling(0).time;
    let r = analyseFrame(strip(circling(0), t0), {}, {});
    r = analyseFrame(strip(circling(1), t0 + 3600_000), r.state, { velocity: { maxIntervalS: 1800 } });
    expect(r.sample).toBeUndefined();
    expect(r.waiting).toMatch(/3600 s since the previous frame, more than the 1800 s/);
    expect(r.state.previous!.time).toBe(t0 + 3600_000);
    r = analyseFrame(strip(circling(2), t0 + 3720_000), r.state, { velocity: { maxIntervalS: 1800 } });
    expect(r.sample!.time).toBe(t0 + 3660_000);
  });
});
