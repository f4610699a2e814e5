// Our G_theta map against scipy's FFT convolution (Debian's python3-scipy), through the committed
// fixture written by test/fixtures/core/make_gtheta_fixture.py.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { createFluxKernel } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { helicityFlux } from '../../core/helicityFlux.js';

const fx = JSON.parse(readFileSync(new URL('../fixtures/core/gtheta_scipy.json', import.meta.url), 'utf8'));

describe('G_theta against scipy.signal.fftconvolve', () => {
  it(`matches pixel by pixel to 1e-6 relative (${fx.library})`, () => {
    const frame = { time: 0, nx: fx.nx, ny: fx.ny, dx: fx.dx, dy: fx.dy, bn: Float64Array.from(fx.bn), vx: Float64Array.from(fx.vx), vy: Float64Array.from(fx.vy) };
    const r = helicityFlux(createFluxKernel(frame), fluxTransport(frame));
    const ref: number[] = fx.gtheta;
    const scale = Math.max(...ref.map(Math.abs));
    let worst = 0;
    for (let i = 0; i < ref.length; i++) {
      const e = Math.abs(r.gTheta[i] - ref[i]) / Math.max(Math.abs(ref[i]), 1e-3 * scale);
      worst = Math.max(worst, e);
    }
    expect(worst).toBeLessThan(1e-6);
    expect(Math.abs(r.total - fx.total) / Math.abs(fx.total)).toBeLessThan(1e-6);
  });
});
