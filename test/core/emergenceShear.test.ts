// With vector data, emergence + shear (Berger & Field 1984; Kusano et al. 2002) equals the G_A
// total computed from Bn u = Bn v_t - v_n B_t (Demoulin & Berger 2003).
import { describe, expect, it } from 'vitest';
import { measureRate } from '../../core/measureRate.js';
import { seededRandom } from '../support/random.js';

describe('emergence and shear terms', () => {
  it('add up to the total, and a pure horizontal motion has no emergence term', () => {
    const nx = 24, ny = 20, n = nx * ny;
    const r = seededRandom(9);
    const m = (a: number) => Float64Array.from({ length: n }, () => a * (r() - 0.5));
    const frame = { time: 0, nx, ny, dx: 0.4, dy: 0.4, bn: m(1600), bx: m(600), by: m(600), vx: m(1), vy: m(1), vz: m(0.4) };
    const s = measureRate({ frame, noiseG: 0 }).sample;
    expect(s.emergence).toBeDefined();
    expect(Math.abs(s.emergence! + s.shear! - s.totalGa) / Math.abs(s.totalGa)).toBeLessThan(1e-9);
    expect(Math.abs(s.total - s.totalGa) / Math.abs(s.totalGa)).toBeLessThan(1e-9);
    const still = measureRate({ frame: { ...frame, vz: new Float64Array(n) }, noiseG: 0 }).sample;
    expect(still.emergence).toBe(0);
    expect(Math.abs(still.shear! - still.total) / Math.abs(still.total)).toBeLessThan(1e-9);
  });
});
