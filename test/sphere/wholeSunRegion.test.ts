// A whole Sun as a region of `process`: invented whole-Sun maps (replay/demo/sunDemo.ts, written
// by `synth --demo sun`) through the batch give rows whose sphere columns are those of the
// spherical engine on the same files (measureSphere, core/sphere/), whose hemisphere budgets add up
// to the budget, and flat frames keep those cells empty. The per-frame dispatch (which maps go to
// the sphere) and the accumulation state the monitor stores as JSON are checked in core.
import { mkdtemp, readFile, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AccumulationState } from '../../core/accumulate.js';
import { accumulate, emptyAccumulation } from '../../core/accumulate.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { frameFromMaps } from '../../core/frame.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { seriesCsv } from '../../core/seriesColumns.js';
import { CARRINGTON_SIDEREAL_MICRORAD_S, HOWARD_1990_SIDEREAL } from '../../core/sphere/differentialRotation.js';
import { DEMO_BIPOLES, inventedSun } from '../../core/sphere/inventedSun.js';
import type { SphereMeasurement } from '../../core/sphere/measureSphere.js';
import { measureSphere } from '../../core/sphere/measureSphere.js';
import { sphericalFrame } from '../../core/sphere/sphericalFrame.js';
import { loadFrameFile } from '../../replay/frameFiles.js';
import { processFolder } from '../../replay/processCommand.js';
import { synth } from '../../replay/synthCommand.js';
import { SYNTH_SPEC, synthCli } from '../../server/commands/batch.js';
import { parseCommandArgs } from '../../server/commands/args.js';
import { ensureCompiledWorker } from '../replay/compiledWorker.js';

const SPHERE_COLUMNS = ['rate_rotation', 'rate_own_motions', 'rate_north', 'rate_south', 'budget_rotation', 'budget_north', 'budget_south', 'planar_departure'] as const;
const quiet = { write: () => true } as unknown as NodeJS.WritableStream;

let dir: string;
beforeAll(async () => { dir = await mkdtemp(join(tmpdir(), 'helicord-sun-')); });
afterAll(async () => { await rm(dir, { recursive: true, force: true }); });

function parseCsv(text: string): Record<string, string>[] {
  const [head, ...lines] = text.trim().split('\n');
  const cols = head.split(',');
  return lines.map((l) => Object.fromEntries(l.split(',').map((v, i) => [cols[i], v])));
}

describe('a whole Sun through process', () => {
  it('rows carry the rotation share measureSphere gives for the same maps (1e-9), hemisphere budgets adding to the budget, in the CSV and the JSON', async () => {
    ensureCompiledWorker();
    const frames = join(dir, 'sun');
    // 72 x 36 (5-degree pixels), four maps 6 h apart, 2 G of seeded noise.
    await synth({ out: frames, scene: 'sun', size: 36, frames: 4, demo: { noiseG: 2, seed: 3 } });
    const files = (await readdir(frames)).sort();
    expect(files).toEqual(['sun_0000.fits', 'sun_0001.fits', 'sun_0002.fits', 'sun_0003.fits']);
    const out = join(dir, 'sun.csv'), json = join(dir, 'sun.json');
    const r = await processFolder({ folder: frames, out, json, workers: 1, progress: quiet });
    expect(r.used).toBe(4);
    expect(r.samples).toBe(4);
    const rows = (JSON.parse(await readFile(json, 'utf8')) as { samples: SeriesRow[] }).samples;
    const csv = parseCsv(await readFile(out, 'utf8'));
    expect(rows).toHaveLength(4);
    const ms: SphereMeasurement[] = [];
    for (let k = 0; k < 4; k++) {
      const frame = await loadFrameFile(join(frames, files[k]));
      const s = sphericalFrame(frame)!;
      expect(s.grid.wholeSun).toBe(true);
      const m = measureSphere(s.grid, s.maps);
      ms.push(m);
      const row = rows[k];
      expect(row.time).toBe(new Date(frame.time).toISOString());
      expect(row.flags).toContain('whole-sun');
      expect(Math.abs(row.rate_total - m.total)).toBeLessThanOrEqual(1e-9 * Math.abs(m.total));
      expect(Math.abs(row.rate_rotation! - m.rotation)).toBeLessThanOrEqual(1e-9 * Math.abs(m.rotation));
      expect(Math.abs(row.rate_own_motions! - m.ownMotions)).toBeLessThanOrEqual(1e-9 * Math.abs(m.total));
      expect(Math.abs(row.rate_north! - m.north!)).toBeLessThanOrEqual(1e-9 * Math.abs(m.north!));
      expect(Math.abs(row.rate_south! - m.south!)).toBeLessThanOrEqual(1e-9 * Math.abs(m.south!));
      expect(row.planar_departure).toBeNull();
      // Budgets per hemisphere: both trapezoid sums of rates that add up to the total, so they add
      // up to the budget but for rounding (a few ulps of the larger hemisphere).
      const scale = Math.abs(row.budget_north!) + Math.abs(row.budget_south!);
      expect(Math.abs(row.budget_north! + row.budget_south! - row.budget_total)).toBeLessThanOrEqual(1e-12 * scale);
      // The CSV carries the same numbers (shortest round-trip text).
      for (const c of SPHERE_COLUMNS) expect(csv[k][c]).toBe(row[c] === null ? '' : String(row[c]));
    }
    // The differential-rotation share is a real share, not the whole or nothing: invented Sun, 5-degree pixels.
    expect(Math.abs(ms[0].rotation)).toBeGreaterThan(0.05 * Math.abs(ms[0].total));
    expect(Math.abs(ms[0].ownMotions)).toBeGreaterThan(0.05 * Math.abs(ms[0].total));
    // The rotation budget is the trapezoid of the rotation share over the 6-hour steps.
    const trapezoid = ms.slice(1).reduce((s, m, i) => s + ((ms[i].rotation + m.rotation) / 2) * 6 * 3600, 0);
    expect(Math.abs(rows[3].budget_rotation! - trapezoid)).toBeLessThanOrEqual(1e-12 * Math.abs(trapezoid));
    expect(rows[3].budget_north! * rows[3].budget_south!).toBeLessThan(0);
  }, 120_000);

  it('a flat region keeps the sphere cells empty', async () => {
    ensureCompiledWorker();
    const frames = join(dir, 'flat');
    await synth({ out: frames, frames: 2, size: 24, withVelocity: true });
    const out = join(dir, 'flat.csv'), json = join(dir, 'flat.json');
    const r = await processFolder({ folder: frames, out, json, workers: 1, progress: quiet });
    expect(r.samples).toBe(2);
    const csv = parseCsv(await readFile(out, 'utf8'));
    const rows = (JSON.parse(await readFile(json, 'utf8')) as { samples: SeriesRow[] }).samples;
    for (let k = 0; k < 2; k++) {
      expect(csv[k].rate_total).not.toBe('');
      for (const c of SPHERE_COLUMNS) { expect(csv[k][c]).toBe(''); expect(rows[k][c]).toBeUndefined(); }
    }
  }, 120_000);
});

describe('synth --demo sun', () => {
  it('writes whole-Sun Carrington maps with velocity that read back as the invented Sun (float32), dated by the cadence; JSON refused', async () => {
    const out = join(dir, 'cli');
    const said: string[] = [];
    const sink = { write: (t: string) => { said.push(t); return true; } } as unknown as NodeJS.WritableStream;
    expect(await synthCli(parseCommandArgs(SYNTH_SPEC, ['--out', out, '--demo', 'sun', '--size', '24', '--frames', '2', '--cadence', '3600']), sink)).toBe(0);
    expect((await readdir(out)).sort()).toEqual(['sun_0000.fits', 'sun_0001.fits']);
    expect(said.join('')).toMatch(/2 whole-Sun demo maps \(48x24, CRLN-CAR, 3600 s cadence/);
    const f = await loadFrameFile(join(out, 'sun_0001.fits'));
    const want = inventedSun(DEMO_BIPOLES, 3600, Date.UTC(2026, 2, 1), { ny: 24 });
    expect(f.time).toBe(Date.UTC(2026, 2, 1, 1));
    expect(f.provenance?.keywords?.CTYPE1).toBe('CRLN-CAR');
    for (const k of [0, 37, 150, 287]) {
      expect(f.bn[k]).toBe(Math.fround(want.bn[k]));
      expect(f.vx![k]).toBe(Math.fround(want.vx[k]));
      expect(f.vy![k]).toBe(Math.fround(want.vy[k]));
    }
    await expect(synthCli(parseCommandArgs(SYNTH_SPEC, ['--out', out, '--demo', 'sun', '--format', 'json']), sink)).rejects.toThrow(/FITS only/);
    // Pixels beyond the readers' largest (100 Mm: 15-degree pixels are 182 Mm) are refused before anything is written.
    await expect(synthCli(parseCommandArgs(SYNTH_SPEC, ['--out', join(dir, 'coarse'), '--demo', 'sun', '--size', '12']), sink)).rejects.toThrow(/ny: must be an integer of at least 22/);
  });
});

describe('which maps are measured on the sphere (core analyseFrame)', () => {
  const start = Date.UTC(2026, 2, 1);
  const keywordsOf = (k: Record<string, unknown>) => Object.fromEntries(Object.entries(k).filter(([, v]) => typeof v !== 'object')) as Record<string, string | number | boolean>;
  const sunFrame = (timeS: number, withVelocity = true) => {
    const map = inventedSun(DEMO_BIPOLES, timeS, start, { ny: 24 });
    return frameFromMaps({ time: start + timeS * 1000, nx: map.nx, ny: map.ny, dx: 60, dy: 60 },
      { bn: map.bn, ...(withVelocity && { vx: map.vx, vy: map.vy }) }, 'sun.fits', { provenance: { source: 'sun.fits', keywords: keywordsOf(map.keywords) } });
  };

  it('a whole Sun: the sample of measureSphere with its figures; without velocity refused naming vx/vy', () => {
    const f = sunFrame(0);
    const a = analyseFrame(f, {});
    const s = sphericalFrame(f)!;
    const m = measureSphere(s.grid, s.maps);
    expect(a.sample!.total).toBe(m.total);
    expect(a.sample!.sphere!.rotation).toBe(m.rotation);
    expect(a.sample!.sphere!.north).toBe(m.north);
    expect(a.sample!.flags).toContain('whole-sun');
    expect(a.footpoints).toBeUndefined();
    expect(() => analyseFrame(sunFrame(0, false), {})).toThrow(/sun\.fits: vx\/vy/);
    // Settings reach the engine: the share is linear in the profile seen from the map's frame
    // (Omega - Omega_frame), so doubling that doubles it; the rate itself does not change.
    const F = CARRINGTON_SIDEREAL_MICRORAD_S, p = HOWARD_1990_SIDEREAL;
    const one = analyseFrame(f, {}, { sphere: { frameRateMicroradPerS: F } }).sample!;
    const two = analyseFrame(f, {}, { sphere: { frameRateMicroradPerS: F, rotationProfile: { a: F + 2 * (p.a - F), b: 2 * p.b, c: 2 * p.c } } }).sample!;
    expect(two.total).toBe(m.total);
    expect(Math.abs(two.sphere!.rotation - 2 * one.sphere!.rotation)).toBeLessThan(1e-9 * Math.abs(one.sphere!.rotation));
    expect(one.sphere!.rotation).toBe(m.rotation); // the defaults: Howard's profile in Carrington's frame
  });

  it('a heliographic patch with velocity: planar (with footpoints) unless patches are asked for the sphere; then its planar departure is in the row', () => {
    // A 10-degree CEA patch on the equator, a bipole moved by a shear.
    const nx = 40, ny = 40, cd = 0.25;
    const bn = new Float64Array(nx * ny), vx = new Float64Array(nx * ny), vy = new Float64Array(nx * ny);
    for (let iy = 0; iy < ny; iy++) for (let ix = 0; ix < nx; ix++) {
      const i = iy * nx + ix;
      bn[i] = 1000 * Math.exp(-((ix - 14) ** 2 + (iy - 20) ** 2) / 12) - 1000 * Math.exp(-((ix - 26) ** 2 + (iy - 20) ** 2) / 12);
      vx[i] = 0.3 * (iy - 20) / 20;
    }
    const keywords = { CTYPE1: 'CRLN-CEA', CTYPE2: 'CRLT-CEA', CUNIT1: 'deg', CUNIT2: 'deg', CRPIX1: 20.5, CRPIX2: 20.5, CRVAL1: 100, CRVAL2: 0, CDELT1: cd, CDELT2: cd, RSUN_REF: 696e6 };
    const f = frameFromMaps({ time: start, nx, ny, dx: 696 * cd * Math.PI / 180, dy: 696 * cd * Math.PI / 180 }, { bn, vx, vy }, 'patch.fits', { provenance: { source: 'patch.fits', keywords } });
    const planar = analyseFrame(f, {});
    expect(planar.sample!.sphere).toBeUndefined();
    expect(planar.footpoints).toBeDefined();
    const onSphere = analyseFrame(f, {}, { sphere: { patches: true } });
    expect(onSphere.sample!.flags).toContain('sphere-patch');
    const dep = onSphere.sample!.sphere!.planar!.departure;
    // A 10-degree patch on the equator: planar and spherical differ by the curvature error (docs/sphere.md: about 1e-4).
    expect(Math.abs(dep)).toBeGreaterThan(0);
    expect(Math.abs(dep)).toBeLessThan(1e-2);
    const row = accumulate(emptyAccumulation(), onSphere.sample!).row;
    expect(row.planar_departure).toBe(dep);
    // The planar engine on the flattened patch is the planar path's own rate (same pixels, same kernel).
    expect(Math.abs(onSphere.sample!.sphere!.planar!.rate - planar.sample!.total)).toBeLessThan(1e-12 * Math.abs(planar.sample!.total));
  });

  it('the accumulation state with its sphere part survives JSON (the monitor stores it with every frame): same rows', () => {
    const samples = [0, 3, 6, 9].map((h) => analyseFrame(sunFrame(h * 3600), {}).sample!);
    let direct: AccumulationState = emptyAccumulation();
    let stored: AccumulationState = emptyAccumulation();
    const a: SeriesRow[] = [], b: SeriesRow[] = [];
    for (const s of samples) {
      const x = accumulate(direct, s, {}, { frameId: 1 });
      direct = x.state; a.push(x.row);
      const y = accumulate(JSON.parse(JSON.stringify(stored)) as AccumulationState, s, {}, { frameId: 1 });
      stored = y.state; b.push(y.row);
    }
    expect(b).toEqual(a);
    expect(a[3].budget_rotation).not.toBe(0);
    expect(seriesCsv(b)).toBe(seriesCsv(a));
    // Small: three budgets of a few numbers each.
    expect(JSON.stringify(direct.sphere).length).toBeLessThan(2000);
  });
});
