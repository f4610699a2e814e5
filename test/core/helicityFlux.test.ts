import { describe, expect, it } from 'vitest';
import type { Frame } from '../../core/frame.js';
import { createFluxKernel } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { helicityFlux, helicityFluxTotal } from '../../core/helicityFlux.js';
import { bruteAp, bruteGTheta, integrate } from '../support/bruteForce.js';
import { seededRandom } from '../support/random.js';

function randomFrame(nx: number, ny: number, dx: number, dy: number, seed: number): Frame {
  const r = seededRandom(seed);
  const n = nx * ny;
  const bn = Float64Array.from({ length: n }, () => 2000 * (r() - 0.5));
  const vx = Float64Array.from({ length: n }, () => 2 * (r() - 0.5));
  const vy = Float64Array.from({ length: n }, () => 2 * (r() - 0.5));
  return { time: 0, nx, ny, dx, dy, bn, vx, vy };
}

function relErr(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b), 1e-300);
}

describe('helicity flux by FFT against the direct double sum (definition, Pariat et al. 2005)', () => {
  for (const [nx, ny, dx, dy] of [[7, 5, 0.36, 0.36], [12, 9, 0.5, 0.3], [1, 6, 1, 1], [16, 16, 0.72, 0.72]] as const) {
    it(`maps and totals agree on a ${nx}x${ny} grid (relative 1e-9)`, () => {
      const f = randomFrame(nx, ny, dx, dy, nx * 100 + ny);
      const res = helicityFlux(createFluxKernel(f), fluxTransport(f));
      const brute = bruteGTheta({ ...f, ux: f.vx!, uy: f.vy! });
      const scale = Math.max(...brute.map(Math.abs));
      for (let i = 0; i < brute.length; i++) expect(Math.abs(res.gTheta[i] - brute[i]) / scale).toBeLessThan(1e-9);
      const bt = integrate(brute, dx, dy);
      expect(relErr(res.total, bt)).toBeLessThan(1e-9);
      const ap = bruteAp({ ...f, ux: f.vx!, uy: f.vy! });
      const as = Math.max(...ap.ax.map(Math.abs));
      for (let i = 0; i < brute.length; i++) {
        expect(Math.abs(res.apx[i] - ap.ax[i]) / as).toBeLessThan(1e-9);
        expect(Math.abs(res.apy[i] - ap.ay[i]) / as).toBeLessThan(1e-9);
      }
      // Swap identity (Pariat, Demoulin & Berger 2005): G_A and G_theta integrate to the same total.
      expect(relErr(res.totalGa, res.total)).toBeLessThan(1e-9);
      expect(relErr(helicityFluxTotal(createFluxKernel(f), fluxTransport(f)), res.total)).toBeLessThan(1e-12);
    });
  }
});
