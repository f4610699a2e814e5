// The truth of the accuracy suite checked on its own: every scene obeys the normal-field
// evolution equation, and the engine's total of the true motion meets the analytic values
// (Berger & Field 1984; Pariat, Demoulin & Berger 2005; Moffatt 1969 for the linking number).
import { describe, expect, it } from 'vitest';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import { pixelFluxMx } from '../../core/units.js';
import type { ObjectValue } from './objects.js';
import { RAD_S_PER_DEG_H, spot } from './objects.js';
import type { Scene } from './scenes.js';
import { SCENES, sceneByName } from './scenes.js';
import { sceneMaps, truthAt } from './truth.js';

const v: ObjectValue = { bn: 0, bx: 0, by: 0, fx: 0, fy: 0, vtx: 0, vty: 0, vn: 0 };

/** Bn and F of the scene at one point, summed over `objects` (default all). */
function at(scene: Scene, x: number, y: number, t: number, objects = scene.objects) {
  let bn = 0, fx = 0, fy = 0;
  for (const o of objects) {
    o.at(x, y, t, scene.grid.dx, v);
    bn += v.bn; fx += v.fx; fy += v.fy;
  }
  return { bn, fx, fy };
}

/**
 * Largest |dBn/dt + div F| over the pixel centres and largest |dBn/dt|, G/s, by central
 * differences of the analytic maps with steps of 1 s and 1e-3 px. `transport` may leave objects
 * out of F (to show that the check sees a wrong transport).
 */
function continuityResidual(scene: Scene, t: number, transport = scene.objects) {
  const h = 1, e = 1e-3;
  const { nx, ny, dx } = scene.grid;
  let worst = 0, rate = 0;
  for (let iy = 0; iy < ny; iy += 1) for (let ix = 0; ix < nx; ix += 1) {
    const dBdt = (at(scene, ix, iy, t + h).bn - at(scene, ix, iy, t - h).bn) / (2 * h);
    const dFx = at(scene, ix + e, iy, t, transport).fx - at(scene, ix - e, iy, t, transport).fx;
    const dFy = at(scene, ix, iy + e, t, transport).fy - at(scene, ix, iy - e, t, transport).fy;
    const divF = ((dFx + dFy) / (2 * e * dx)) * 1e-3; // G km/s per Mm -> G/s
    worst = Math.max(worst, Math.abs(dBdt + divF));
    rate = Math.max(rate, Math.abs(dBdt));
  }
  return { worst, rate };
}

/** Sum over pixels of the flux and of its square, Mx and Mx^2. */
function fluxSums(bn: Float64Array, dx: number): { sum: number; squares: number } {
  let sum = 0, squares = 0;
  for (const b of bn) { const f = pixelFluxMx(b, dx, dx); sum += f; squares += f * f; }
  return { sum, squares };
}

describe('accuracy scenes: dBn/dt + div F = 0 with F = Sum_k F_k (the normal component of the induction equation)', () => {
  // Truncation of the central differences is about (step / scale)^2: (1e-3 px / 2 px)^2 for the
  // narrowest pattern and (1 s / 1200 s)^2 for the fastest change, below 1e-6 of dBn/dt; rounding
  // is about 1e-13 of it. 1e-5 leaves a margin of ten over both, while a wrong transport leaves
  // residuals of the order of dBn/dt itself (the last check).
  for (const scene of SCENES) {
    it(`${scene.name}: residual below 1e-5 of the largest |dBn/dt|, at t = 0 and t = 1500 s`, () => {
      for (const t of [0, 1500]) {
        const { worst, rate } = continuityResidual(scene, t);
        if (scene.name === 'static') expect(rate).toBe(0);
        expect(worst).toBeLessThanOrEqual(1e-5 * rate);
      }
    });
  }

  it('the check sees a wrong transport: turn-and-circle without the second spot\'s F leaves a residual of order dBn/dt', () => {
    const scene = sceneByName('turn-and-circle');
    const { worst, rate } = continuityResidual(scene, 0, [scene.objects[0]]);
    expect(worst).toBeGreaterThan(0.3 * rate);
  });

  it('vector objects: F = Bn v_t - v_n B_t at every point, with v_n and B_t not zero', () => {
    const scene = sceneByName('emerging-twisted');
    let checked = 0;
    for (const o of scene.objects) for (const [x, y] of [[40, 50], [64, 64], [80, 70], [53, 64]]) {
      o.at(x, y, 300, scene.grid.dx, v);
      expect(v.vn).not.toBe(0);
      expect(Math.hypot(v.bx, v.by)).toBeGreaterThan(0);
      expect(v.fx).toBeCloseTo(v.bn * v.vtx - v.vn * v.bx, 9);
      expect(v.fy).toBeCloseTo(v.bn * v.vty - v.vn * v.by, 9);
      checked++;
    }
    expect(checked).toBe(8);
  });
});

describe('the truth against analytic values', () => {
  const cache: FluxKernelCache = new Map();

  it('rigid rotation (Berger & Field 1984; Pariat, Demoulin & Berger 2005): every pixel pair turns at Omega, so the total is -(Omega/2pi) Phi_net^2 less the excluded self pixels', () => {
    const Omega = 10 * RAD_S_PER_DEG_H;
    for (const name of ['rigid-round', 'rigid-ar1.6']) {
      const scene = sceneByName(name);
      const maps = sceneMaps(scene, 300);
      const truth = truthAt(scene, 300, cache, maps);
      const { sum, squares } = fluxSums(maps.bn, scene.grid.dx);
      // On the grid the pair sum excludes i = j exactly: -(Omega/2pi) [(Sum phi)^2 - Sum phi^2]; only FFT rounding remains.
      const onGrid = -(Omega / (2 * Math.PI)) * (sum * sum - squares);
      expect(Math.abs(truth.total - onGrid)).toBeLessThan(1e-9 * (Omega / (2 * Math.PI)) * squares);
      // The analytic value -(Omega/2pi) Phi_net^2 differs by the self pixels, (Omega/2pi) Sum phi^2: under 2 % of
      // the orbit term for spots of 4 px (about 1 / (4 pi sigma_major sigma_minor) of Phi^2 each).
      expect(Math.abs(truth.total - truth.analytic!)).toBeLessThanOrEqual((Omega / (2 * Math.PI)) * squares * (1 + 1e-9));
      expect(Math.abs(truth.total) / Math.abs(truth.orbit)).toBeLessThan(0.02);
      // Each spot turns with the pattern: its spin is -(Omega/2pi) Phi_k^2 (less its self pixels), the orbit the rest.
      const phi = truth.fluxes['a+'];
      expect(Math.abs(truth.spins['a+'] + (Omega / (2 * Math.PI)) * phi * phi) / ((Omega / (2 * Math.PI)) * phi * phi)).toBeLessThan(0.02);
    }
  });

  it('an elongated spot turning in place (Berger & Field 1984; Pariat, Demoulin & Berger 2005): spin = -(omega/2pi) Phi^2 within the self-pixel share Sum phi^2 / Phi^2', () => {
    for (const name of ['turn-ar1.3-10dph', 'turn-ar2.5-2dph']) {
      const scene = sceneByName(name);
      const maps = sceneMaps(scene, -200);
      const truth = truthAt(scene, -200, cache, maps);
      const omega = scene.objects[0].motion(0, scene.grid.dx).omega;
      const { sum, squares } = fluxSums(maps.bn, scene.grid.dx);
      expect(Math.abs(truth.spin - -(omega / (2 * Math.PI)) * (sum * sum - squares))).toBeLessThan(1e-9 * Math.abs(truth.spin));
      expect(Math.abs(truth.spin - truth.analytic!) / Math.abs(truth.analytic!)).toBeLessThanOrEqual((squares / (sum * sum)) * (1 + 1e-9));
      expect(truth.orbit).toBe(0);
      expect(truth.total).toBe(truth.spin);
    }
  });

  it('a circling pair (Berger & Field 1984; Pariat, Demoulin & Berger 2005): -(1/pi) Phi1 Phi2 Omega times the share 1 - exp(-D^2 / 2s^2) of the spots\' pair separations beyond 0', () => {
    // For circular Gaussian spots of sigmas w1, w2 at distance D the mean of r / |r|^2 over their pixel
    // pairs is that of the centres times P(|xi| < D) = 1 - exp(-D^2 / 2s^2), s^2 = w1^2 + w2^2 (the
    // plane's Gauss law). What remains is the overlap of the two spots, where the grid drops the
    // pairs of one pixel with itself: at most exp(-D^2 (1/w1^2 + 1/w2^2) / 8) of the total.
    for (const [name, D] of [['circle-15dph-20px', 20], ['circle-5dph-30px', 30], ['circle-2dph-40px', 40]] as const) {
      const scene = sceneByName(name);
      const truth = truthAt(scene, 500, cache);
      const s2 = 3.5 ** 2 + 3 ** 2;
      const deficit = Math.exp(-(D * D) / (2 * s2));
      const overlap = Math.exp(-(D * D) * (1 / 3.5 ** 2 + 1 / 3 ** 2) / 8);
      expect(Math.abs(truth.total / truth.analytic! - (1 - deficit))).toBeLessThanOrEqual(overlap + 1e-12);
      // The spots only translate: no spin (FFT rounding only).
      expect(Math.abs(truth.spin)).toBeLessThan(1e-12 * Math.abs(truth.total));
    }
  });

  it('two same-sign spots circling one full turn inject -2 Phi1 Phi2, twice the linking number times the fluxes (Moffatt 1969)', () => {
    const Omega = 30 * RAD_S_PER_DEG_H, period = (2 * Math.PI) / Omega, D = 24;
    const scene: Scene = {
      name: 'linking', description: 'two + spots circling one full turn', grid: { nx: 96, ny: 96, dx: 0.36, dy: 0.36 },
      vector: false, target: 'circling', analytic: 'circling pair',
      objects: [
        spot({ name: 'a+', x: 48 - D / 2, y: 48, peak: 1500, width: 3, orbit: { x: 48, y: 48, rate: Omega } }),
        spot({ name: 'b+', x: 48 + D / 2, y: 48, peak: 1200, width: 3, orbit: { x: 48, y: 48, rate: Omega } }),
      ],
    };
    const steps = 12;
    let injected = 0;
    const first = truthAt(scene, period / (2 * steps), cache);
    for (let k = 0; k < steps; k++) injected += truthAt(scene, ((k + 0.5) * period) / steps, cache).total * (period / steps);
    const p1 = first.fluxes['a+'], p2 = first.fluxes['b+'];
    const s2 = 2 * 3 ** 2;
    const expected = -2 * p1 * p2 * (1 - Math.exp(-(D * D) / (2 * s2)));
    // The rate changes over the turn only by the grid's anisotropy and the pixel sampling of the
    // spots (exp(-2 pi^2 sigma^2), nothing at 3 px); the overlap bound as for the circling pair.
    expect(Math.abs(injected / expected - 1)).toBeLessThanOrEqual(Math.exp(-(D * D) * (2 / 9) / 8) + 1e-9);
    expect(injected).toBeLessThan(0); // counter-clockwise, same signs: negative
  });

  it('the per-object split: translation alone has no spin; emergence + shear = the G_A total (Berger & Field 1984; Kusano et al. 2002)', () => {
    const translating = truthAt(sceneByName('translate-1'), 0, cache);
    expect(Math.abs(translating.spins['moving+'])).toBeLessThan(1e-12 * Math.abs(translating.total));
    expect(translating.spins['static-']).toBe(0);
    const emerging = truthAt(sceneByName('emerging-twisted'), 0, cache);
    expect(Math.abs(emerging.emergence! + emerging.shear! - emerging.totalGa)).toBeLessThan(1e-9 * emerging.scale);
    expect(Math.abs(emerging.totalGa - emerging.total)).toBeLessThan(1e-9 * emerging.scale);
    // Both terms matter in this scene (so that the suite can score each).
    expect(Math.abs(emerging.emergence!)).toBeGreaterThan(0.2 * emerging.scale);
    expect(Math.abs(emerging.shear!)).toBeGreaterThan(0.2 * emerging.scale);
  });
});
