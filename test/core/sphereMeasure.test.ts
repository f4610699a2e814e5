// One sample of a spherical region (core/sphere/measureSphere.ts) and its series columns
// (core/sphere/sphereColumns.ts, core/seriesColumns.ts).
import { describe, expect, it } from 'vitest';
import { InputError } from '../../core/inputError.js';
import { seriesCsv, SERIES_COLUMNS } from '../../core/seriesColumns.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { HOWARD_1990_SIDEREAL, rotationMotion } from '../../core/sphere/differentialRotation.js';
import { measureSphere, sphereRateSample } from '../../core/sphere/measureSphere.js';
import { accumulate, emptyAccumulation } from '../../core/accumulate.js';
import { accumulateSphere, emptySphereBudget } from '../../core/sphere/sphereColumns.js';
import { sphericalHelicityFlux } from '../../core/sphere/sphericalHelicityFlux.js';
import { sphericalTransport } from '../../core/sphere/sphericalTransport.js';
import { harmonicGradients } from '../../core/sphere/sphericalHarmonics.js';
import { patchGrid, patchScene, spotScene, wholeSunGrid } from './sphereScenes.js';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('a spherical sample', () => {
  const g = wholeSunGrid(90);
  const n = g.nx * g.ny;
  const spots = [
    { lonDeg: 100, latDeg: 20, peak: 900, sigmaDeg: 4, omega: 2e-6, label: 1 }, { lonDeg: 92, latDeg: 23, peak: -850, sigmaDeg: 4, label: 2 },
    { lonDeg: 250, latDeg: -15, peak: -700, sigmaDeg: 5, label: 3 }, { lonDeg: 258, latDeg: -19, peak: 720, sigmaDeg: 4, omega: -1e-6, label: 4 },
  ];

  it('whole Sun: the engine\'s rate, split by hemisphere and into the rotation share and own motions, all adding up', () => {
    const s = spotScene(g, spots, true);
    const rot = rotationMotion(g, HOWARD_1990_SIDEREAL, 2.8653);
    const vx = s.vx.map((v, i) => v + rot.vx[i]);
    const m = measureSphere(g, { bn: s.bn, vx, vy: s.vy, labels: s.labels }, { frameRateMicroradPerS: 2.8653 });
    const t = sphericalTransport(g, s.bn, vx, s.vy);
    // A whole Sun by spherical harmonics unless asked otherwise; no pixel's own spin with them.
    expect(m.engine).toBe('harmonics');
    expect(m.selfPixel).toBe(0);
    expect(m.total).toBe(sphericalHelicityFlux(g, t, harmonicGradients(g, [t.bn])[0], false).total);
    const pairs = measureSphere(g, { bn: s.bn, vx, vy: s.vy }, { frameRateMicroradPerS: 2.8653, wholeSunEngine: 'pairs' });
    expect(pairs.engine).toBe('pairs');
    expect(pairs.total).toBe(sphericalHelicityFlux(g, t).total);
    // The two engines part by their discretisation errors at 2-degree pixels.
    // (The pair sums' rotation share at 180 x 90 is 0.5% short of its converged value, docs/sphere.md;
    // measured here 0.5% for the rate and 1.0% for the share.)
    expect(Math.abs((pairs.total - m.total) / m.total)).toBeLessThan(0.02);
    expect(Math.abs((pairs.rotation - m.rotation) / m.rotation)).toBeLessThan(0.02);
    expect(Math.abs(m.north! + m.south! - m.total)).toBeLessThan(1e-12 * Math.abs(m.total));
    expect(Math.abs(m.rotationNorth! + m.rotationSouth! - m.rotation)).toBeLessThan(1e-12 * Math.abs(m.rotation));
    expect(m.ownMotions).toBe(m.total - m.rotation);
    expect(m.planar).toBeUndefined();
    expect(m.split!.ids).toEqual([1, 2, 3, 4]);
    // Without the turning spots the motion is the profile alone: nothing left for own motions (to
    // rounding with harmonics; with the pair sums, to the finite-difference pixel spin's error,
    // second order, 1e-3 here at 2-degree pixels).
    const still = measureSphere(g, { bn: s.bn, vx: rot.vx, vy: new Float64Array(n) }, { frameRateMicroradPerS: 2.8653 });
    expect(Math.abs(still.ownMotions)).toBeLessThan(1e-12 * Math.abs(still.rotation));
    const stillPairs = measureSphere(g, { bn: s.bn, vx: rot.vx, vy: new Float64Array(n) }, { frameRateMicroradPerS: 2.8653, wholeSunEngine: 'pairs' });
    expect(Math.abs(stillPairs.ownMotions)).toBeLessThan(1e-3 * Math.abs(stillPairs.rotation));
  });

  it('differential rotation injects opposite helicity into mirror-image east-west bipoles: negative north, positive south (Berger & Ruzmaikin 2000; DeVore 2000, from memory)', () => {
    const zero = new Float64Array(n);
    const at = (lat: number) => measureSphere(g, {
      bn: spotScene(g, [{ lonDeg: 105, latDeg: lat, peak: 800, sigmaDeg: 4 }, { lonDeg: 95, latDeg: lat, peak: -800, sigmaDeg: 4 }], true).bn, vx: zero, vy: zero,
    });
    const north = at(20), south = at(-20);
    expect(north.rotation).toBeLessThan(0);
    expect(south.rotation).toBeGreaterThan(0);
    expect(rel(-south.rotation, north.rotation)).toBeLessThan(1e-9);
    // Each lands in its own hemisphere (the other holds only the uniform return flux's share).
    expect(Math.abs(north.rotationSouth!)).toBeLessThan(1e-6 * Math.abs(north.rotation));
  });

  it('a patch beyond the work budget: planar rate plus the coarse correction, within 10% of the planar error of the exact answer', () => {
    const pg = patchGrid(150, 20, 30, 96, 'CAR', false);
    const sc = patchScene(pg, 'spin', 150, 20, 30);
    const exact = measureSphere(pg, sc);
    const coarse = measureSphere(pg, sc, { maxRowPairWork: 2e5 });
    expect(exact.planar!.coarsening).toBe(1);
    expect(coarse.planar!.coarsening).toBeGreaterThan(1);
    expect(Math.abs(coarse.total - exact.total)).toBeLessThan(0.1 * Math.abs(exact.planar!.rate - exact.pairs));
    expect(Math.abs(coarse.rotation - exact.rotation)).toBeLessThan(0.05 * Math.abs(exact.rotation));
    expect(coarse.north).toBeNull();
  });

  it('a rate sample the budget, the rules and the series take like any other; noise sigma propagated', () => {
    const s = spotScene(g, spots, true);
    const m = measureSphere(g, { bn: s.bn, vx: s.vx, vy: s.vy, labels: s.labels }, { noiseG: 10 });
    expect(m.noiseG).toBe(10);
    expect(m.sigmaTotal).toBeGreaterThan(0);
    expect(m.sigmaTotal).toBeLessThan(Math.abs(m.total));
    const sample = sphereRateSample(m, Date.UTC(2026, 0, 1), 0);
    expect(sample.flags).toContain('whole-sun');
    expect(sample.splitMethod).toBe('labels');
    expect(Math.abs(sample.spin + sample.orbit + sample.background - sample.total)).toBeLessThan(1e-12 * Math.abs(sample.total));
    const step = accumulate(emptyAccumulation(), sample, {}, { frameId: 1 });
    expect(step.row.rate_total).toBe(m.total);
    expect(step.row.flux_unsigned).toBe(m.unsignedFlux);
    // Unsigned flux: |B| dS over pixels at or above 3 noise units, in Mx.
    let expected = 0;
    for (let i = 0; i < n; i++) if (Math.abs(s.bn[i]) >= 30) expected += Math.abs(s.bn[i]) * g.rowAreaMm2[Math.floor(i / g.nx)] * 1e16;
    expect(Math.abs(m.unsignedFlux - expected)).toBeLessThan(1e-12 * expected);
  });

  it('refuses a whole Sun beyond the budget and a profile that is not numbers, naming the field', () => {
    const s = spotScene(g, spots, true);
    const zero = new Float64Array(n);
    expect(() => measureSphere(g, { bn: s.bn, vx: zero, vy: zero }, { maxRowPairWork: 1e4, wholeSunEngine: 'pairs' }, 'sun.fits')).toThrow(InputError);
    expect(() => measureSphere(g, { bn: s.bn, vx: zero, vy: zero }, { rotationProfile: { a: NaN, b: 0, c: 0 } }, 'sun.fits')).toThrow(/rotationProfile.a/);
    expect(() => measureSphere(g, { bn: s.bn.subarray(1), vx: zero, vy: zero }, {}, 'sun.fits')).toThrow(/sun.fits: bn/);
  });

  it('series columns: budgets are the trapezoid integrals of the rates, and the CSV carries them in their columns', () => {
    const base = { engine: 'pairs' as const, wholeSun: true, total: 5, pairs: 5, selfPixel: 0, ownMotions: 3, maskedFraction: 0, sigmaTotal: 0, noiseG: 0, unsignedFlux: 0, rotationProfile: HOWARD_1990_SIDEREAL, frameRateMicroradPerS: 0 };
    let state = emptySphereBudget();
    const cols = [];
    for (const [k, r] of [[0, 2], [1, 4], [2, 4]] as const) {
      const step = accumulateSphere(state, Date.UTC(2026, 0, 1) + k * 720_000, { ...base, rotation: r, north: 1, south: -3, rotationNorth: r, rotationSouth: 0 });
      state = step.state;
      cols.push(step.columns);
    }
    expect(cols[2].budget_rotation).toBeCloseTo(((2 + 4) / 2) * 720 + 4 * 720, 9);
    expect(cols[2].budget_north).toBeCloseTo(1440, 9);
    expect(cols[2].budget_south).toBeCloseTo(-3 * 1440, 9);
    expect(cols[2].planar_departure).toBeNull();
    const row = { time: '2026-01-01T00:24:00.000Z', flags: [], ...cols[2] } as unknown as SeriesRow;
    const [head, line] = seriesCsv([row]).trim().split('\n');
    const cells = line.split(',');
    expect(head.split(',')).toEqual([...SERIES_COLUMNS]);
    expect(Number(cells[SERIES_COLUMNS.indexOf('budget_north')])).toBeCloseTo(1440, 9);
    expect(Number(cells[SERIES_COLUMNS.indexOf('rate_rotation')])).toBe(4);
    expect(cells[SERIES_COLUMNS.indexOf('planar_departure')]).toBe('');
  });
});
