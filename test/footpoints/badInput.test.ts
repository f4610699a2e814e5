import { describe, expect, it } from 'vitest';
import { analyseFootpoints } from '../../core/footpoints/analyseFootpoints.js';
import { InputError } from '../../core/inputError.js';
import { sceneField, sceneFrame } from './scene.js';

// Input policy (DEVELOPERS.md): bad input is refused with an InputError naming source, field and
// problem; an empty result is a flagged zero, not an error; NaN never becomes a footpoint or a total.
const grid = { nx: 64, ny: 48, dx: 0.5, dy: 0.5 };
const spot = { x: 10, y: 12, a: 1.5, b: 1.5, angle: 0, peak: 900 };

describe('a frame with no footpoint above threshold', () => {
  it('gives zero spin and orbit with the no-footpoints flag, also with a velocity field', () => {
    const frame = { ...sceneFrame(grid, 0, [], 8, 4) };
    const n = grid.nx * grid.ny;
    const vel = { vx: new Float64Array(n).fill(0.3), vy: new Float64Array(n).fill(-0.2) };
    const r = analyseFootpoints(undefined, frame, {}, vel);
    expect(r.footpoints).toEqual([]);
    expect(r.flags).toContain('no-footpoints');
    expect(r.point).toEqual({ spin: 0, orbit: 0, motionUnknown: [], spinUnknown: [] });
    expect(r.exact!.spin).toBe(0);
    expect(r.exact!.orbit).toBe(0);
    expect(r.exact!.background).toBe(r.exact!.total);
    expect(r.labels.every((l) => l === 0)).toBe(true);
    expect(r.pairs).toEqual([]);
    // The estimated noise is the 8 G we put in: the MAD of 3072 Gaussian samples scatters by
    // about 2 % (its efficiency is 37 %), so within 8 % (4 sigma).
    expect(r.segmentation.noiseSource).toBe('estimated');
    expect(Math.abs(r.segmentation.noise / 8 - 1)).toBeLessThan(0.08);
  });

  it('after a frame with footpoints, they vanish and the rates drop to zero with the flag', () => {
    const r0 = analyseFootpoints(undefined, sceneFrame(grid, 0, [spot], 8, 1), { noise: 8 });
    const r1 = analyseFootpoints(r0.state, sceneFrame(grid, 60_000, [], 8, 2), { noise: 8 });
    expect(r1.flags).toContain('no-footpoints');
    expect(r1.events).toEqual([expect.objectContaining({ kind: 'vanished', id: r0.footpoints[0].id, cause: 'unpaired' })]);
    expect(r1.point.spin).toBe(0);
    expect(r1.point.orbit).toBe(0);
    expect(Number.isFinite(r1.state.budget.orbitPoint)).toBe(true);
  });
});

describe('NaN islands', () => {
  it('never create footpoints, and leave a footpoint beside them as it was', () => {
    const clean = sceneField(grid, [spot], 8, 9);
    const holed = clean.slice();
    // A square island, a ring island and scattered single NaN pixels, all away from the spot.
    for (let y = 20; y < 30; y++) for (let x = 30; x < 40; x++) holed[y * grid.nx + x] = NaN;
    for (let y = 5; y < 16; y++) for (let x = 45; x < 56; x++) {
      const r = Math.hypot(x - 50, y - 10);
      if (r > 3 && r < 5) holed[y * grid.nx + x] = NaN;
    }
    for (let k = 0; k < 40; k++) holed[(k * 977) % holed.length] = NaN;
    const ref = analyseFootpoints(undefined, { time: 0, ...grid, bn: clean }, { noise: 8 });
    const r = analyseFootpoints(undefined, { time: 0, ...grid, bn: holed }, { noise: 8 });
    expect(r.footpoints).toHaveLength(1);
    expect(ref.footpoints).toHaveLength(1);
    for (let i = 0; i < holed.length; i++) if (Number.isNaN(holed[i])) expect(r.labels[i]).toBe(0);
    const scattered = [...Array(40).keys()].map((k) => (k * 977) % holed.length).filter((i) => ref.labels[i] !== 0);
    // Flux changes by the scattered NaN pixels that fell on the spot, and by the few edge pixels
    // whose smoothed value crossed the threshold because a neighbour became NaN: well under 1 %.
    let lost = 0;
    for (const i of scattered) lost += clean[i] * 0.25e16;
    expect(lost).toBeGreaterThan(0);
    expect(Math.abs(r.footpoints[0].flux / (ref.footpoints[0].flux - lost) - 1)).toBeLessThan(5e-3);
    expect(r.segmentation.maskedFraction).toBeGreaterThan(0.03);
  });

  it('an island of NaN beside strong field does not split or spread it', () => {
    const bn = sceneField(grid, [{ ...spot, x: 20, y: 20, a: 3, b: 3 }], 8, 3);
    for (let y = 18; y < 23; y++) for (let x = 60; x < 64; x++) bn[y * grid.nx + x] = NaN; // far away
    bn[20 * grid.nx + 40] = NaN; // single hole at the centre of the spot
    const r = analyseFootpoints(undefined, { time: 0, ...grid, bn }, { noise: 8 });
    expect(r.footpoints).toHaveLength(1);
    expect(r.labels[20 * grid.nx + 40]).toBe(0);
    expect(Number.isFinite(r.footpoints[0].flux)).toBe(true);
  });

  it('a frame that is all NaN is refused', () => {
    const bn = new Float64Array(grid.nx * grid.ny).fill(NaN);
    expect(() => analyseFootpoints(undefined, { time: 0, ...grid, bn, provenance: { source: 'empty.fits' } })).toThrow(/empty\.fits: bn: .*no valid value/);
  });
});

describe('refusals between frames', () => {
  const r0 = analyseFootpoints(undefined, sceneFrame(grid, 0, [spot], 8, 1), { noise: 8 });

  it('a change of grid size is refused with a clear InputError', () => {
    const other = { nx: 64, ny: 64, dx: 0.5, dy: 0.5 };
    const f = { ...sceneFrame(other, 60_000, [spot], 8, 2), provenance: { source: 'frame_0002.fits' } };
    let err: unknown;
    try { analyseFootpoints(r0.state, f); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(InputError);
    const e = err as InputError;
    expect(e.source).toBe('frame_0002.fits');
    expect(e.field).toBe('grid');
    expect(e.message).toMatch(/64x48 pixels of 0.5x0.5 Mm, now 64x64/);
  });

  it('a change of pixel size is refused too', () => {
    const f = sceneFrame({ ...grid, dx: 0.36, dy: 0.36 }, 60_000, [spot], 8, 2);
    expect(() => analyseFootpoints(r0.state, f)).toThrow(/grid: changed between frames.*0\.36x0\.36 Mm/);
  });

  it('a frame that does not follow the previous one in time is refused', () => {
    expect(() => analyseFootpoints(r0.state, sceneFrame(grid, 0, [spot], 8, 2))).toThrow(InputError);
    expect(() => analyseFootpoints(r0.state, sceneFrame(grid, -60_000, [spot], 8, 2))).toThrow(/time: .* is not after the previous frame/);
  });

  it('a velocity field of the wrong size is refused', () => {
    const v = { vx: new Float64Array(10), vy: new Float64Array(10) };
    expect(() => analyseFootpoints(undefined, sceneFrame(grid, 0, [spot], 8, 2), {}, v)).toThrow(InputError);
  });

  it('the state passed in is left unchanged', () => {
    const before = JSON.stringify({ ...r0.state, labels: Array.from(r0.state.labels), field: Array.from(r0.state.field) });
    analyseFootpoints(r0.state, sceneFrame(grid, 60_000, [{ ...spot, x: 10.5 }], 8, 2), { noise: 8 });
    expect(JSON.stringify({ ...r0.state, labels: Array.from(r0.state.labels), field: Array.from(r0.state.field) })).toBe(before);
  });
});
