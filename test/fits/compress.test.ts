// RICE_1 coding and tile-compressed writing. The Rice coder follows the tiled image compression
// convention (FITS Standard 4.0, s.10.4.1); its output is compared byte for byte with the tiles
// astropy wrote (Debian's python3-astropy, test/fixtures/fits), and our compressed files are
// checked by fitsverify and decoded by astropy to the last bit of our own decoding.
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { findColumn, readArrayCell, readBinaryTable, readCell } from '../../core/fits/binaryTable.js';
import { headerValue } from '../../core/fits/header.js';
import { listHdus } from '../../core/fits/hduList.js';
import { readFitsImage } from '../../core/fits/readImage.js';
import type { Quantization } from '../../core/fits/quantize.js';
import { riceDecode, riceEncode } from '../../core/fits/rice.js';
import { writeFits } from '../../core/fits/writeImage.js';
import { seededRandom } from '../support/random.js';

const dir = join(__dirname, '..', 'fixtures', 'fits');
const FITSVERIFY = '/usr/bin/fitsverify';
const PYTHON = '/usr/bin/python3';
const haveFitsverify = existsSync(FITSVERIFY);
const haveAstropy = existsSync(PYTHON) && spawnSync(PYTHON, ['-c', 'import astropy.io.fits']).status === 0;
if (process.env.CI === 'true' && !haveFitsverify) throw new Error(`fitsverify is required in CI but ${FITSVERIFY} is missing`);
if (!haveFitsverify) console.warn(`SKIPPING fitsverify checks: ${FITSVERIFY} not installed`);
if (!haveAstropy) console.warn(`SKIPPING astropy decoding of our compressed files: ${PYTHON} with astropy not available`);

describe('Rice coder', () => {
  const rand = seededRandom(11);
  for (const bytePix of [1, 2, 4] as const) {
    for (const [label, gen] of [
      ['zeros', () => 0],
      ['small steps', () => Math.round((rand() - 0.5) * 6)],
      ['full range', () => Math.floor(rand() * 2 ** (8 * bytePix)) - 2 ** (8 * bytePix - 1)],
    ] as const) {
      it(`round trip, ${bytePix}-byte values, ${label}, partial last block`, () => {
        for (const n of [1, 31, 32, 33, 200]) {
          const v = new Int32Array(n);
          let acc = 0;
          for (let i = 0; i < n; i++) { acc = label === 'small steps' ? acc + gen() : gen(); v[i] = acc; }
          const shift = 32 - 8 * bytePix;
          const wrapped = v.map((x) => (x << shift) >> shift);
          for (const blockSize of [16, 32]) {
            const c = riceEncode(v, { bytePix, blockSize });
            const out = new Int32Array(n);
            riceDecode(c, n, { bytePix, blockSize }, out);
            expect(Array.from(out)).toEqual(Array.from(wrapped));
          }
        }
      });
    }
  }

  for (const name of ['rice_int32.fits', 'rice_smooth32.fits', 'rice_int16.fits', 'rice_uint8.fits', 'rice_float_dither1.fits']) {
    it(`re-encodes every tile of ${name} to astropy's exact bytes`, () => {
      const bytes = new Uint8Array(readFileSync(join(dir, name)));
      const hdu = listHdus(bytes, name)[1];
      const table = readBinaryTable(bytes, hdu, name);
      const col = findColumn(table, 'COMPRESSED_DATA')!;
      const zbitpix = headerValue(hdu.header, 'ZBITPIX') as number;
      const bytePix = (zbitpix < 0 ? 4 : Math.min(4, zbitpix / 8)) as 1 | 2 | 4;
      const nx = headerValue(hdu.header, 'ZNAXIS1') as number, ny = headerValue(hdu.header, 'ZNAXIS2') as number;
      const tx = headerValue(hdu.header, 'ZTILE1') as number, ty = headerValue(hdu.header, 'ZTILE2') as number;
      const cx = Math.ceil(nx / tx);
      for (let k = 0; k < table.rows; k++) {
        const w = Math.min(tx, nx - (k % cx) * tx), h = Math.min(ty, ny - Math.floor(k / cx) * ty);
        const { data } = readArrayCell(bytes, table, col, k, name, 'tile');
        const ints = new Int32Array(w * h);
        riceDecode(data, w * h, { bytePix, blockSize: 32 }, ints);
        expect(Array.from(riceEncode(ints, { bytePix, blockSize: 32 }))).toEqual(Array.from(data));
      }
    });
  }
});

describe('tile-compressed writing', () => {
  const nx = 70, ny = 23;
  const rand = seededRandom(5);
  const img = Float32Array.from({ length: nx * ny }, (_, i) => Math.fround(800 * Math.sin((i % nx) / 9) * Math.cos(i / nx / 5) + 20 * (rand() - 0.5)));
  img[17] = NaN;
  img[500] = NaN;
  for (let i = 300; i < 320; i++) img[i] = 0;
  const cases: { type: 'RICE_1' | 'GZIP_1'; method: Quantization; tile?: [number, number] }[] = [
    { type: 'RICE_1', method: 'SUBTRACTIVE_DITHER_1' },
    { type: 'RICE_1', method: 'SUBTRACTIVE_DITHER_2', tile: [32, 8] },
    { type: 'RICE_1', method: 'NO_DITHER', tile: [32, 8] },
    { type: 'GZIP_1', method: 'SUBTRACTIVE_DITHER_1', tile: [70, 5] },
  ];
  const tmp = mkdtempSync(join(tmpdir(), 'helicord-zfits-'));
  for (const c of cases) {
    const label = `${c.type} ${c.method}${c.tile ? ` tiles ${c.tile.join('x')}` : ''}`;
    const bytes = writeFits({ images: [{ name: 'BN', nx, ny, values: img, bunit: 'G', wcs: { cdelt: [0.36, 0.36] }, compression: { type: c.type, method: c.method, zdither0: 77, ...(c.tile && { tile: c.tile }) } }] });
    const path = join(tmp, `${c.type}-${c.method}.fits`);
    writeFileSync(path, bytes);
    const back = readFitsImage(bytes, path, { extname: 'BN' });

    it(`${label}: reads back within half a quantization step, NaN kept${c.method === 'SUBTRACTIVE_DITHER_2' ? ', zeros exact' : ''}`, () => {
      const hdu = listHdus(bytes, path)[1];
      const table = readBinaryTable(bytes, hdu, path);
      let maxScale = 0;
      for (let k = 0; k < table.rows; k++) maxScale = Math.max(maxScale, readCell(bytes, table, findColumn(table, 'ZSCALE')!, k));
      expect(maxScale).toBeGreaterThan(0);
      let worst = 0;
      for (let i = 0; i < img.length; i++) {
        if (Number.isNaN(img[i])) { expect(Number.isNaN(back.values[i])).toBe(true); continue; }
        worst = Math.max(worst, Math.abs(back.values[i] - img[i]));
        if (c.method === 'SUBTRACTIVE_DITHER_2' && img[i] === 0) expect(back.values[i]).toBe(0);
      }
      expect(worst).toBeLessThanOrEqual(0.5 * maxScale * (1 + 1e-6) + 1e-4);
      // The step is far below the noise (quantize level 16), not a coarse rounding.
      expect(maxScale).toBeLessThan(2);
    });

    it.skipIf(!haveFitsverify)(`${label}: passes fitsverify with 0 warnings and 0 errors`, () => {
      const r = spawnSync(FITSVERIFY, ['-l', path], { encoding: 'utf8' });
      expect(r.stdout + r.stderr, r.stdout).toMatch(/Verification found 0 warning\(s\) and 0 error\(s\)/);
    });

    it.skipIf(!haveAstropy)(`${label}: astropy decodes our file to exactly our values`, () => {
      const script = `import sys, json, numpy as np
from astropy.io import fits
with fits.open(sys.argv[1]) as f:
    d = np.asarray(f['BN'].data, dtype=np.float64).ravel()
    print(json.dumps([None if np.isnan(v) else float(v) for v in d]))`;
      const astropy = JSON.parse(execFileSync(PYTHON, ['-c', script, path], { encoding: 'utf8' })) as (number | null)[];
      // astropy 5.2 ignores ZBLANK when decoding quantized floats, so at our NaN pixels it returns
      // -2147483647 * ZSCALE + ZZERO (newer versions give NaN); every other pixel must agree exactly.
      const ours = Array.from(back.values, (v) => (Number.isNaN(v) ? null : v));
      const nan = ours.flatMap((v, i) => (v === null ? [i] : []));
      expect(nan).toEqual([17, 500]);
      for (const i of nan) expect(astropy[i] === null || astropy[i]! < -1e8).toBe(true);
      expect(astropy.filter((_, i) => !nan.includes(i))).toEqual(ours.filter((_, i) => !nan.includes(i)));
    });
  }

  it('a tile without noise estimate is stored losslessly (GZIP_COMPRESSED_DATA)', () => {
    const flat = new Float32Array(40 * 4).fill(3.25);
    flat[7] = NaN;
    const bytes = writeFits({ images: [{ name: 'BN', nx: 40, ny: 4, values: flat, compression: { type: 'RICE_1' } }] });
    const back = readFitsImage(bytes, 'flat.fits', { extname: 'BN' });
    expect(Array.from(back.values, (v) => (Number.isNaN(v) ? null : v))).toEqual(Array.from(flat, (v) => (Number.isNaN(v) ? null : v)));
  });
});
