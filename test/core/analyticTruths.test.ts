// Analytic results of the helicity-flux formula (Berger & Field 1984; Pariat, Demoulin & Berger 2005;
// Moffatt 1969 for the linking number), computed by the FFT engine on synthetic scenes.
import { describe, expect, it } from 'vitest';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import { createFluxKernel, fluxKernelFor } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { helicityFlux, helicityFluxTotal } from '../../core/helicityFlux.js';
import { splitByLabels } from '../../core/labelSplit.js';
import { pixelFluxMx } from '../../core/units.js';
import { labelFlux, spotFrame } from '../support/scenes.js';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('analytic truths', () => {
  it('rigid rotation of a flux-balanced region: dtheta/dt = omega for every pair, so the rate is 0 up to the excluded self pixels', () => {
    const omega = 2e-6; // rad/s
    const nx = 48, ny = 40, d = 0.5;
    const f0 = spotFrame(nx, ny, d, [
      { x: 8, y: 10, peak: 1200, sigma: 1.5 }, { x: 16, y: 9, peak: -900, sigma: 2 },
      { x: 11, y: 15, peak: -500, sigma: 1.2 },
    ]);
    // Remove the net flux exactly so that the region is balanced.
    const mean = f0.bn.reduce((s, v) => s + v, 0) / f0.bn.length;
    const bn = f0.bn.map((v) => v - mean);
    const cx = 12, cy = 10;
    const vx = new Float64Array(bn.length), vy = new Float64Array(bn.length);
    for (let i = 0; i < bn.length; i++) {
      const x = (i % nx) * d, y = Math.floor(i / nx) * d;
      vx[i] = -omega * 1000 * (y - cy);
      vy[i] = omega * 1000 * (x - cx);
    }
    const frame = { ...f0, bn, vx, vy, labels: undefined };
    const total = helicityFluxTotal(createFluxKernel(frame), fluxTransport(frame));
    // -(omega/2pi) [ (Sum Phi_i)^2 - Sum Phi_i^2 ] with Sum Phi_i = 0: only the self-pixel term remains.
    let self = 0, positive = 0;
    for (const b of bn) { self += pixelFluxMx(b, d, d) ** 2; if (b > 0) positive += pixelFluxMx(b, d, d); }
    expect(rel(total, (omega / (2 * Math.PI)) * self)).toBeLessThan(1e-9);
    // ... which is small beside the spin scale of the positive flux alone: about 1/(4 pi s^2) for
    // spots s pixels wide (here 3 to 4), and it vanishes as the grid resolves the spots.
    expect(Math.abs(total) / ((omega / (2 * Math.PI)) * positive ** 2)).toBeLessThan(0.02);
  });

  it('an axisymmetric spot of flux Phi spinning at omega: spin = -(omega/2pi) Phi^2 within 1%, nothing added to the orbit with a spot outside it', () => {
    const omega = 1e-5;
    const d = 0.1; // 10 pixels per sigma
    const f = spotFrame(96, 64, d, [
      { x: 3.0, y: 3.2, peak: 1500, sigma: 1.0, omega },
      { x: 7.0, y: 3.2, peak: -1500, sigma: 0.6 },
    ]);
    const k = createFluxKernel(f), t = fluxTransport(f);
    const s = splitByLabels(k, t, f.labels!);
    const phi = labelFlux(f, 1);
    const expected = -(omega / (2 * Math.PI)) * phi * phi;
    expect(rel(s.spin[0], expected)).toBeLessThan(0.01);
    // Sign convention in words: a positive footpoint turning counter-clockwise (omega > 0, seen
    // from the corona) injects negative helicity.
    expect(phi).toBeGreaterThan(0);
    expect(s.spin[0]).toBeLessThan(0);
    expect(Math.abs(s.orbit[1]) / Math.abs(expected)).toBeLessThan(0.01);
    expect(Math.abs(s.spin[1])).toBe(0); // the static spot has no spin
  });

  it('two compact spots circling at Omega: dH/dt = -(1/pi) Phi1 Phi2 Omega within 1%', () => {
    const Omega = 3e-6, R = 6, cx = 16, cy = 16;
    // Velocities of circular motion about (cx, cy): v = Omega z x (c - centre), km/s.
    const v = (x: number, y: number) => ({ vx: -Omega * 1000 * (y - cy), vy: Omega * 1000 * (x - cx) });
    const f = spotFrame(64, 64, 0.5, [
      { x: cx - R, y: cy, peak: 1000, sigma: 0.6, ...v(cx - R, cy) },
      { x: cx + R, y: cy, peak: 700, sigma: 0.5, ...v(cx + R, cy) },
    ]);
    const total = helicityFlux(createFluxKernel(f), fluxTransport(f)).total;
    const expected = (-1 / Math.PI) * labelFlux(f, 1) * labelFlux(f, 2) * Omega;
    expect(rel(total, expected)).toBeLessThan(0.01);
  });

  it('n full turns of two same-sign footpoints inject -2 n Phi1 Phi2 (twice the linking number times the fluxes, Moffatt 1969)', () => {
    const Omega = 2 * Math.PI / 3600; // one turn an hour, counter-clockwise
    const turns = 2, steps = 24 * turns, dt = (turns * 3600) / steps;
    const cx = 16, cy = 16, R = 5;
    const cache: FluxKernelCache = new Map();
    const rates: number[] = [];
    let phi1 = 0, phi2 = 0;
    for (let s = 0; s <= steps; s++) {
      const a = Omega * s * dt;
      const spot = (phase: number, peak: number, sigma: number) => {
        const x = cx + R * Math.cos(a + phase), y = cy + R * Math.sin(a + phase);
        return { x, y, peak, sigma, vx: -Omega * 1000 * (y - cy), vy: Omega * 1000 * (x - cx) };
      };
      const f = spotFrame(64, 64, 0.5, [spot(0, 900, 0.6), spot(Math.PI, 900, 0.6)], s * dt);
      phi1 = labelFlux(f, 1); phi2 = labelFlux(f, 2);
      rates.push(helicityFluxTotal(fluxKernelFor(f, cache), fluxTransport(f)));
    }
    let budget = 0;
    for (let s = 1; s < rates.length; s++) budget += 0.5 * (rates[s] + rates[s - 1]) * dt;
    expect(rel(budget, -2 * turns * phi1 * phi2)).toBeLessThan(0.01);
    expect(cache.size).toBe(1); // one kernel served every frame of the same grid
  });
});
