// Files we write: checked by Debian's fitsverify (no errors, no warnings), read back by astropy
// (Debian's python3-astropy) with the same values and keywords, and by our own reader.
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { formatFloat, keywordCards } from '../../core/fits/cards.js';
import { headerCard, headerValue } from '../../core/fits/header.js';
import { readFitsImage } from '../../core/fits/readImage.js';
import type { FitsToWrite } from '../../core/fits/writeImage.js';
import { writeFits } from '../../core/fits/writeImage.js';

const FITSVERIFY = '/usr/bin/fitsverify';
const PYTHON = '/usr/bin/python3';
const haveFitsverify = existsSync(FITSVERIFY);
const haveAstropy = existsSync(PYTHON) && spawnSync(PYTHON, ['-c', 'import astropy.io.fits']).status === 0;
if (process.env.CI === 'true' && !haveFitsverify) {
  throw new Error(`fitsverify is required in CI but ${FITSVERIFY} is missing (apt-get install fitsverify)`);
}
if (!haveFitsverify) console.warn(`SKIPPING fitsverify checks: ${FITSVERIFY} not installed`);
if (!haveAstropy) console.warn(`SKIPPING astropy read-back: ${PYTHON} with astropy not available`);

const nx = 13, ny = 7;
const bn = Float32Array.from({ length: nx * ny }, (_, i) => Math.fround(Math.sin(i * 0.37) * 1234.5678));
bn[5] = NaN;
const vx = Float32Array.from({ length: nx * ny }, (_, i) => Math.fround((i % nx) * 0.01 - 0.05));
const longHistory = 'processed from hmi.sharp_cea_720s.377.20110215_000000_TAI.Br.fits, hmi.sharp_cea_720s.377.20110215_000000_TAI.Bp.fits with local correlation tracking';

const spec: FitsToWrite = {
  primary: [
    { key: 'CREATOR', value: 'helicord 0.1.0', comment: 'program that wrote the file' },
    { key: 'DATE', value: '2026-12-01T21:00:00.000', comment: 'file written (UTC)' },
    { key: 'SRCFILES', value: longHistory, comment: 'input frames' },
    { key: 'HISTORY', comment: 'G_theta helicity flux density from one frame pair' },
  ],
  images: [
    {
      name: 'GTHETA', nx, ny, values: bn, bunit: 'Mx2 s-1 cm-2',
      wcs: { cdelt: [0.36, 0.36], crpix: [7, 4], crval: [0, 0] },
      keywords: [
        { key: 'DATE-OBS', value: '2011-02-15T00:00:00.000', comment: 'mid-time of the pair' },
        { key: 'TIMESYS', value: 'UTC' },
        { key: 'DT', value: 720.0, float: true, comment: '[s] time between the frames' },
      ],
    },
    { name: 'VX', nx, ny, values: vx, bunit: 'km/s', wcs: { cdelt: [0.36, 0.36] } },
  ],
};

describe('FITS writer', () => {
  const bytes = writeFits(spec);
  const dir = mkdtempSync(join(tmpdir(), 'helicord-fits-'));
  const path = join(dir, 'out.fits');
  writeFileSync(path, bytes);

  it('is a whole number of 2880-byte blocks', () => {
    expect(bytes.length % 2880).toBe(0);
  });

  it('reads back through our reader with the same values and keywords', () => {
    const g = readFitsImage(bytes, 'out.fits', { extname: 'GTHETA' });
    expect(g.axes).toEqual([nx, ny]);
    for (let i = 0; i < bn.length; i++) expect(Object.is(g.values[i], bn[i]) || g.values[i] === bn[i]).toBe(true);
    expect(headerValue(g.header, 'BUNIT')).toBe('Mx2 s-1 cm-2');
    expect(headerValue(g.header, 'CDELT1')).toBe(0.36);
    expect(headerValue(g.header, 'CRPIX1')).toBe(7);
    expect(headerCard(g.header, 'CRPIX1')?.kind).toBe('float');
    const p = readFitsImage(bytes, 'out.fits', { extname: 'VX' });
    expect(Array.from(p.values)).toEqual(Array.from(vx));
  });

  it.skipIf(!haveFitsverify)('passes fitsverify with 0 errors and 0 warnings (Debian fitsverify)', () => {
    const r = spawnSync(FITSVERIFY, ['-l', path], { encoding: 'utf8' });
    const out = r.stdout + r.stderr;
    expect(out, out).toMatch(/\*\*\*\* Verification found 0 warning\(s\) and 0 error\(s\). \*\*\*\*/);
  });

  it.skipIf(!haveAstropy)('reads back through astropy with the same values and keywords (Debian python3-astropy)', () => {
    const script = `
import json, sys
import numpy as np
from astropy.io import fits
with fits.open(sys.argv[1]) as f:
    out = {}
    for h in f:
        d = None if h.data is None else [None if np.isnan(v) else float(v) for v in np.asarray(h.data, dtype=np.float64).ravel()]
        out[h.name] = {'values': d, 'header': {k: h.header[k] for k in h.header if k not in ('COMMENT', 'HISTORY', '')},
                       'history': [str(x) for x in h.header.get('HISTORY', [])]}
print(json.dumps(out))`;
    const json = JSON.parse(execFileSync(PYTHON, ['-c', script, path], { encoding: 'utf8' })) as Record<string, { values: (number | null)[] | null; header: Record<string, unknown>; history: string[] }>;
    expect(json.PRIMARY.header.CREATOR).toBe('helicord 0.1.0');
    expect(json.PRIMARY.header.SRCFILES).toBe(longHistory);
    expect(json.PRIMARY.history).toEqual(['G_theta helicity flux density from one frame pair']);
    const g = json.GTHETA;
    expect(g.values).toEqual(Array.from(bn, (v) => (Number.isNaN(v) ? null : v)));
    expect(g.header).toMatchObject({ BUNIT: 'Mx2 s-1 cm-2', CTYPE1: 'X', CUNIT1: 'Mm', CDELT1: 0.36, CDELT2: 0.36, CRPIX1: 7, CRPIX2: 4, 'DATE-OBS': '2011-02-15T00:00:00.000', TIMESYS: 'UTC', DT: 720 });
    expect(json.VX.values).toEqual(Array.from(vx));
  });
});

describe('header cards', () => {
  it('floats are written so that they read back exactly (FITS 4.0 s.4.2.4 syntax)', () => {
    for (const v of [0.1, 1 / 3, 1e21, 1e-300, -2.5e-7, 6.02214076e23, 5, -0]) {
      const s = formatFloat(v);
      expect(s).toMatch(/^[+-]?\d+\.\d*(E[+-]?\d+)?$/);
      expect(Object.is(Number(s), v)).toBe(true);
    }
  });

  it('long strings use CONTINUE cards of 80 characters, doubled quotes never split', () => {
    const text = "x'".repeat(60);
    const cards = keywordCards({ key: 'LONGQ', value: text });
    expect(cards.length).toBeGreaterThan(1);
    for (const c of cards) expect(c.length).toBe(80);
    expect(cards[1].startsWith("CONTINUE  '")).toBe(true);
  });

  it('refuses invalid keywords and non-finite numbers with an InputError', () => {
    expect(() => keywordCards({ key: 'lower case', value: 1 })).toThrow(/not a valid FITS keyword/);
    expect(() => keywordCards({ key: 'X', value: NaN })).toThrow(/cannot be written/);
    expect(() => writeFits({ images: [{ name: 'A', nx: 2, ny: 2, values: [1, 2, 3] }] })).toThrow(/has 3 values but nx\*ny = 4/);
  });
});
