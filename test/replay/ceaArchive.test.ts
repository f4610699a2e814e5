// An archive that stores each component in its own file (RICE-compressed, CEA axes in degrees,
// TAI times, a latitudinal component pointing south), written by astropy with
// test/fixtures/fits/make_cea_archive.py, read by process, replay's archive and rate with the
// cea-components layout: the same series as the same frames given as our JSON (astropy's decoded
// values, by = -Bt), and maps that keep the input's coordinates (read back by astropy when present).
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { mkdtemp, readFile, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listHdus } from '../../core/fits/hduList.js';
import { headerRecord } from '../../core/fits/header.js';
import { frameWcs, pixelToWorld } from '../../core/frameAssembly/wcs.js';
import { openArchive } from '../../replay/archiveSource.js';
import { loadFrameFile, loadFrameFileSet } from '../../replay/frameFiles.js';
import { processFolder } from '../../replay/processCommand.js';
import { main } from '../../server/cli.js';
import { ensureCompiledWorker } from './compiledWorker.js';

const FIXTURES = join(import.meta.dirname, '../fixtures/fits/cea');
const ARCHIVE = join(FIXTURES, 'archive');
const JSON_FRAMES = join(FIXTURES, 'json');
const expected = JSON.parse(await readFile(join(FIXTURES, 'expected.json'), 'utf8')) as {
  files: Record<string, { pixels: [number, number][]; world: [number, number][] }>;
};

const PYTHON = '/usr/bin/python3';
const haveAstropy = existsSync(PYTHON) && spawnSync(PYTHON, ['-c', 'import astropy.wcs']).status === 0;
if (!haveAstropy) {
  if (process.env.CI === 'true') throw new Error(`astropy is required in CI but ${PYTHON} cannot import astropy.wcs (apt-get install python3-astropy)`);
  console.warn(`SKIPPING the astropy read-back of output maps: ${PYTHON} with astropy not available (apt-get install python3-astropy)`);
}

class Collect extends Writable {
  text = '';
  override _write(chunk: Buffer, _enc: string, done: () => void) { this.text += chunk.toString(); done(); }
}

function parseCsv(text: string): Record<string, string>[] {
  const [head, ...lines] = text.trim().split('\n');
  const cols = head.split(',');
  return lines.map((l) => Object.fromEntries(l.split(',').map((v, i) => [cols[i], v])));
}

const NUMERIC = ['dt_s', 'rate_total', 'rate_spin', 'rate_orbit', 'rate_background', 'budget_total', 'budget_spin', 'budget_orbit',
  'rate_total_ga', 'rate_emergence', 'rate_shear', 'sigma_rate_total', 'sigma_budget_total', 'noise_g', 'flux_unsigned', 'budget_normalised'];

let dir: string;
let archiveRows: Record<string, string>[];
let jsonRows: Record<string, string>[];

beforeAll(async () => {
  ensureCompiledWorker();
  dir = await mkdtemp(join(tmpdir(), 'helicord-cea-'));
  const progress = new Collect();
  // The archive through the command line, with its maps.
  const err = new Collect();
  const code = await main(['process', ARCHIVE, '--layout', 'cea-components', '--out', join(dir, 'archive.csv'), '--maps', join(dir, 'maps'), '--workers', '1'], new Collect(), err);
  expect(code, err.text).toBe(0);
  await processFolder({ folder: JSON_FRAMES, out: join(dir, 'json.csv'), workers: 1, progress });
  archiveRows = parseCsv(await readFile(join(dir, 'archive.csv'), 'utf8'));
  jsonRows = parseCsv(await readFile(join(dir, 'json.csv'), 'utf8'));
}, 120_000);

afterAll(async () => { if (dir) await rm(dir, { recursive: true, force: true }); });

describe('an archive of one file per component (cea-components)', () => {
  it('assembles each time from its three files: bn = Br, bx = Bp, by = -Bt, UTC = TAI - 37 s, pixels of 0.03 deg', async () => {
    const names = (await readdir(ARCHIVE)).sort();
    const frames = await loadFrameFileSet(names.map((n) => join(ARCHIVE, n)), { layout: 'cea-components' });
    const json = await loadFrameFile(join(JSON_FRAMES, 'patch7_2.json'));
    const f = frames[2];
    expect(new Date(f.time).toISOString()).toBe('2026-03-14T06:24:00.000Z');
    expect(f.time).toBe(json.time);
    expect([f.dx, f.dy]).toEqual([json.dx, json.dy]);
    expect(f.dx).toBeCloseTo(0.03 * 12.148, 3);
    expect(Array.from(f.bn)).toEqual(Array.from(json.bn));
    expect(Array.from(f.bx!)).toEqual(Array.from(json.bx!));
    expect(Array.from(f.by!)).toEqual(Array.from(json.by!));
    expect(f.provenance!.keywords!.FILE_BY).toMatch(/\.Bt\.fits$/);
  });

  it('process gives the series of the same frames as JSON: rates, budget, flux and H/Phi^2 to 1e-12', () => {
    expect(archiveRows).toHaveLength(3);
    expect(archiveRows.length).toBe(jsonRows.length);
    archiveRows.forEach((row, i) => {
      expect(row.time).toBe(jsonRows[i].time);
      expect(row.velocity_method).toBe('dave4vm');
      for (const k of NUMERIC) {
        const x = Number(row[k]), y = Number(jsonRows[i][k]);
        expect(Number.isFinite(x), `${k} ${row[k]}`).toBe(true);
        expect(Math.abs(x - y), k).toBeLessThanOrEqual(1e-12 * Math.abs(y));
      }
      expect(Number(row.budget_normalised)).toBe(Number(row.budget_total) / Number(row.flux_unsigned) ** 2);
    });
    expect(Number(archiveRows[2].budget_total)).not.toBe(0);
  });

  it('the rows of the archive carry the patch centre (mean of the pair\'s frames), the JSON rows none', () => {
    // Frame k's centre: Carrington 121.25 at CRLN_OBS = 108 - 13.2 deg/day * t, i.e. Stonyhurst 13.25 + 13.2 t.
    archiveRows.forEach((row, i) => {
      const midDays = ((i + 0.5) * 720) / 86400;
      expect(Number(row.centre_lon_deg)).toBeCloseTo(121.25 - (108 - 13.2 * midDays), 9);
      expect(Number(row.centre_lat_deg)).toBeCloseTo(-18.5, 9);
      expect(Number(row.centre_disk_angle_deg)).toBeGreaterThan(15);
      expect(jsonRows[i].centre_lon_deg).toBe('');
    });
  });

  it('the sign rule matters: without negating Bt the budget is another', async () => {
    const config = join(dir, 'south.json');
    await writeFile(config, JSON.stringify({ components: { layout: 'cea-components', transforms: { by: { negate: false } } } }));
    await processFolder({ folder: ARCHIVE, out: join(dir, 'south.csv'), config, workers: 1, progress: new Collect() });
    const rows = parseCsv(await readFile(join(dir, 'south.csv'), 'utf8'));
    const a = Number(rows[2].budget_total), b = Number(archiveRows[2].budget_total);
    expect(Math.abs(a - b)).toBeGreaterThan(1e-3 * Math.abs(b));
  });

  it('without the layout every file is refused by name, and the run says so', async () => {
    const progress = new Collect();
    const r = await processFolder({ folder: ARCHIVE, out: join(dir, 'none.csv'), workers: 1, progress });
    expect(r.used).toBe(0);
    expect(r.skipped).toHaveLength(12);
    expect(progress.text).toMatch(/patch7\.20260314_060037_TAI\.Bp\.fits: EXTNAME BN: not found .*--layout cea-components/);
  });

  it('a time with a component file missing is set aside with the reason; the other times are used', async () => {
    const names = (await readdir(ARCHIVE)).sort().filter((n) => !/061237_TAI\.Br/.test(n));
    const scan = await openArchive(ARCHIVE, { components: { layout: 'cea-components' } });
    expect(scan.entries).toHaveLength(4);
    expect(scan.entries[0].files).toHaveLength(3);
    // What replay feeds the monitor: each entry assembled from its files when it is read.
    const third = await scan.frame(2);
    expect(Array.from(third.by!)).toEqual(Array.from((await loadFrameFile(join(JSON_FRAMES, 'patch7_2.json'))).by!));
    const { indexScans, scanOne } = await import('../../replay/archiveSource.js');
    const index = indexScans(await Promise.all(names.map((n) => scanOne(join(ARCHIVE, n), { layout: 'cea-components' }))), { layout: 'cea-components' });
    expect(index.entries).toHaveLength(3);
    expect(index.skipped.map((s) => s.reason)).toEqual([expect.stringMatching(/no bn file for the time of .*061237_TAI\.Bp\.fits/), expect.stringMatching(/no bn file/)]);
  });

  it('rate over the twelve files gives the last pair of the JSON frames', async () => {
    const names = (await readdir(ARCHIVE)).sort().map((n) => join(ARCHIVE, n));
    const jsons = (await readdir(JSON_FRAMES)).sort().map((n) => join(JSON_FRAMES, n));
    const outA = new Collect(), outB = new Collect();
    expect(await main(['rate', ...names, '--layout', 'cea-components'], outA, new Collect())).toBe(0);
    expect(await main(['rate', ...jsons], outB, new Collect())).toBe(0);
    const a = JSON.parse(outA.text), b = JSON.parse(outB.text);
    expect(a.time).toBe(b.time);
    for (const k of ['rate_total', 'rate_spin', 'rate_orbit', 'rate_emergence', 'rate_shear', 'flux_unsigned']) expect(Math.abs(a[k] - b[k])).toBeLessThanOrEqual(1e-12 * Math.abs(b[k]));
    expect(a.sample_frames.map((f: string) => f.split('/').pop())).toEqual(['patch7.20260314_062437_TAI.Br.fits', 'patch7.20260314_063637_TAI.Br.fits']);
    expect(a.centre_lat_deg).toBeCloseTo(-18.5, 9);
    expect(b.centre_lat_deg).toBeNull();
  });
});

describe('output maps keep the input\'s coordinates', () => {
  const mapsOf = async () => (await readdir(join(dir, 'maps'))).sort();

  it('each maps file carries the CEA WCS and observer keywords of its frame; our WCS gives astropy\'s input coordinates', async () => {
    const maps = await mapsOf();
    expect(maps).toEqual(['patch7.20260314_061237_TAI.Br.maps.fits', 'patch7.20260314_062437_TAI.Br.maps.fits', 'patch7.20260314_063637_TAI.Br.maps.fits']);
    for (const m of maps) {
      const bytes = new Uint8Array(await readFile(join(dir, 'maps', m)));
      const hdus = listHdus(bytes, m);
      const g = hdus.find((h) => h.name === 'GTHETA')!;
      const k = headerRecord(g.header);
      expect([k.CTYPE1, k.CTYPE2, k.CUNIT1, k.CUNIT2]).toEqual(['CRLN-CEA', 'CRLT-CEA', 'deg', 'deg']);
      expect([k.CRPIX1, k.CRPIX2, k.CRVAL1, k.CRVAL2, k.CDELT1, k.CDELT2]).toEqual([20.5, 16.5, 121.25, -18.5, 0.03, 0.03]);
      for (const key of ['CRLN_OBS', 'CRLT_OBS', 'HGLN_OBS', 'HGLT_OBS', 'DSUN_OBS', 'RSUN_REF']) expect(typeof k[key]).toBe('number');
      expect(k.TIMESYS).toBe('UTC');
      const want = expected.files[m.replace('.maps.fits', '.fits')];
      const w = frameWcs(k, 40, 32)!;
      want.pixels.forEach((p, i) => {
        const got = pixelToWorld(w, p[0], p[1])!;
        expect(got[0]).toBeCloseTo(want.world[i][0], 9);
        expect(got[1]).toBeCloseTo(want.world[i][1], 9);
      });
    }
  });

  it.skipIf(!haveAstropy)('astropy reads every image of a maps file back to the input\'s coordinates (Debian python3-astropy)', async () => {
    const maps = await mapsOf();
    const script = `
import json, sys, warnings
import numpy as np
from astropy.io import fits
from astropy.wcs import WCS
out = {}
for path, pixels in json.load(sys.stdin):
    with fits.open(path) as f:
        for h in f[1:]:
            with warnings.catch_warnings():
                warnings.simplefilter('ignore')
                w = WCS(h.header, naxis=2)
            p = np.array(pixels, dtype=float)
            a, b = w.wcs_pix2world(p[:, 0], p[:, 1], 1)
            out[path + '#' + h.name] = [[float(x), float(y)] for x, y in zip(a, b)]
print(json.dumps(out))
`;
    const jobs = maps.map((m) => [join(dir, 'maps', m), expected.files[m.replace('.maps.fits', '.fits')].pixels]);
    const r = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(jobs), encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const got = JSON.parse(r.stdout) as Record<string, [number, number][]>;
    expect(Object.keys(got).length).toBeGreaterThanOrEqual(maps.length * 2);
    for (const [key, world] of Object.entries(got)) {
      const m = key.split('#')[0].split('/').pop()!;
      const want = expected.files[m.replace('.maps.fits', '.fits')].world;
      world.forEach((p, i) => {
        expect(Math.abs(p[0] - want[i][0])).toBeLessThan(1e-9);
        expect(Math.abs(p[1] - want[i][1])).toBeLessThan(1e-9);
      });
    }
  });
});
