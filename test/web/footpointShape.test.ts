import { describe, expect, it } from 'vitest';
import { normaliseFootpoint, normaliseFootpoints, normaliseTracks } from '../../web/footpointShape.js';

describe('footpoint answers', () => {
  it('keeps the contract shape as it is', () => {
    const fp = { id: 4, polarity: -1, flux: -2e21, x: 10, y: 12, area: 30, omega: -1e-5, omega_method: 'pattern', spin: 3e34, spin_point: 2e34, partners: [{ id: 1, orbit: -5e35 }], outline: [[1, 1], [2, 1], [2, 2]] };
    expect(normaliseFootpoint(fp)).toEqual(fp);
  });

  it('reads the core row names, marks a missing rotation unobservable, drops bad entries', () => {
    const list = normaliseFootpoints([
      { id: 7, flux: -1e21, x: 3, y: 4, area: 5, omega: null, omegaSource: null, spinExact: 1e34, spinPoint: 9e33 },
      { id: 8, flux: 1e21, x: 3, y: 4, area: 5, omega: 2e-5, omegaSource: 'velocity', spinExact: null },
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
