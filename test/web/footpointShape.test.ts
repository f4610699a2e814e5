import { describe, expect, it } from 'vitest';
import { normaliseFootpoint, normaliseFootpoints, normaliseTracks } from '../../web/footpointShape.js';

describe('footpoint answers', () => {
  it('keeps the contract shape as it is', () => {
    const fp = { id: 4, polarity: -1, flux: -2e21, x: 10, y: 12, area: 30, omega: -1e-5, omega_method: 'pattern', spin: 3e34, spin_point: 2e34, partners: [{ id: 1, orbit: -5e35 }], outline: [[1, 1], [2, 1], [2, 2]] };
    expect(normaliseFootpoint(fp)).toEqual(fp);
  });

  it('marks a missing rotation unobservable, drops bad entries; the analysis\' own names are not read', () => {
    const list = normaliseFootpoints([
      { id: 7, flux: -1e21, x: 3, y: 4, area: 5, omega: null, spin: 1e34, spin_point: 9e33 },
      { id: 8, flux: 1e21, x: 3, y: 4, area: 5, omega: 2e-5, omega_method: 'velocity', spin: null, spinExact: 5e33 },
      { id: 9, x: Number.NaN, y: 1 },
      { x: 1, y: 1 },
      null,
    ]);
    expect(list.map((f) => [f.id, f.polarity, f.omega, f.omega_method, f.spin, f.partners])).toEqual([
      [7, -1, null, 'unobservable', 1e34, []],
      [8, 1, 2e-5, 'velocity', null, []],
    ]);
    expect(normaliseFootpoints({})).toEqual([]);
  });

  it('keeps finite track points only', () => {
    expect(normaliseTracks({ 1: [[0, 0], [1, null], [2, 2]], 2: 'x', 3: [] })).toEqual({ 1: [[0, 0], [2, 2]] });
    expect(normaliseTracks(null)).toEqual({});
  });
});

describe('one wire contract for footpoints', () => {
  it('what the server builds from an analysis (core/wire/footpointWire.ts) the page reads unchanged', async () => {
    const { footpointsForWire } = await import('../../core/wire/footpointWire.js');
    const row = (id: number, flux: number, over: Record<string, unknown>) => ({
      id, polarity: flux > 0 ? 1 : -1, status: 'continued', parent: id, born: 0, flux, x: 10 * id, y: 5, pixels: 40, area: 10,
      peak: 900, orientation: 0, elongation: 1.1, touchesEdge: false, vx: 0.1, vy: 0, motionSource: 'tracking',
      omega: 2e-5, omegaSource: 'pattern', omegaVelocity: null, omegaPattern: 2e-5, omegaPatternError: 4e-6, patternNote: null,
      anisotropy: 0.2, spinExact: -3e34, spinPoint: -2.8e34, spinBudget: -1e38, vError: 0.01, ...over,
    });
    const report = {
      footpoints: [row(1, 2e21, {}), row(2, -1.5e21, { omega: null, omegaSource: null, omegaPattern: null, omegaPatternError: null, patternNote: 'axisymmetric', spinExact: null })],
      pairMatrix: { ids: [1, 2], orbitExact: [[null, -4e35], [-4e35, null]], orbitPoint: [[null, -3.9e35], [-3.9e35, null]], windingTurns: [[null, 0.1], [0.1, null]] },
    };
    // eslint-disable-next-line @typescript-eslint/no-explicit-any
    const wire = footpointsForWire(report as any);
    expect(wire[0]).toMatchObject({ id: 1, omega: 2e-5, omega_method: 'pattern', omega_error: 4e-6, spin: -3e34, spin_point: -2.8e34, spin_budget: -1e38, partners: [{ id: 2, orbit: -4e35 }] });
    // The exact spin is missing for footpoint 2: the point estimate stands in, as docs/api.md says.
    expect(wire[1]).toMatchObject({ id: 2, omega: null, omega_method: 'unobservable', omega_note: 'axisymmetric', spin: -2.8e34 });
    const page = normaliseFootpoints(JSON.parse(JSON.stringify(wire)));
    for (const k of ['id', 'polarity', 'flux', 'x', 'y', 'area', 'omega', 'omega_method', 'spin', 'spin_point', 'partners'] as const) {
      expect(page.map((f) => f[k])).toEqual(wire.map((f) => f[k]));
    }
    expect(page[0].omega_error).toBe(4e-6);
    expect(page[1].omega_note).toBe('axisymmetric');
  });
});
