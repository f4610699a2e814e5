// The FITS reader against files written by astropy (Debian's python3-astropy 5.2) and the values
// astropy decodes from them (test/fixtures/fits/make_fixtures.py writes both). Lossless cases
// must match exactly; quantized cases too (the dither sequence is the standard's, FITS 4.0 s.10.2).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { headerCard, headerValue } from '../../core/fits/header.js';
import { listHdus } from '../../core/fits/hduList.js';
import { readFitsImage } from '../../core/fits/readImage.js';
import { ditherRandoms } from '../../core/fits/quantize.js';

const dir = join(__dirname, '..', 'fixtures', 'fits');
interface Expected {
  select: string | number | null;
  axes: number[];
  values: (number | null)[];
  keywords: Record<string, string | number | boolean>;
  comments?: Record<string, string>;
  table?: Record<string, string | number>;
}
const expected = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as Record<string, Expected>;

function load(name: string): Uint8Array {
  return new Uint8Array(readFileSync(join(dir, name)));
}

describe('FITS reader against astropy-decoded fixtures', () => {
  for (const [key, exp] of Object.entries(expected)) {
    const file = key.split('#')[0];
    it(`${key} decodes to astropy's values${exp.table ? ` (${exp.table.ZCMPTYPE}, ${exp.table.ZQUANTIZ ?? 'lossless'})` : ''}`, () => {
      const sel = exp.select === null ? {} : typeof exp.select === 'number' ? { index: exp.select } : { extname: exp.select };
      const img = readFitsImage(load(file), file, sel);
      expect(img.axes).toEqual(exp.axes);
      expect(img.values.length).toBe(exp.values.length);
      let mismatches = 0;
      let first = -1;
      for (let i = 0; i < exp.values.length; i++) {
        const want = exp.values[i];
        const got = img.values[i];
        const ok = want === null ? Number.isNaN(got) : Object.is(got, want) || (got === want && want !== 0);
        if (!ok) { mismatches++; if (first < 0) first = i; }
      }
      expect(mismatches, mismatches ? `first at ${first}: got ${img.values[first]}, astropy ${exp.values[first]}` : '').toBe(0);
      for (const [k, v] of Object.entries(exp.keywords)) expect(headerValue(img.header, k)).toEqual(v);
      if (exp.table) for (const [k, v] of Object.entries(exp.table)) expect(headerValue(img.header, k)).toEqual(v);
      expect(img.compression).toBe(exp.table ? exp.table.ZCMPTYPE : undefined);
    });
  }

  it('longstring.fits keeps comments of CONTINUE strings and COMMENT/HISTORY cards (FITS 4.0 s.4.2.1.2)', () => {
    const img = readFitsImage(load('longstring.fits'), 'longstring.fits');
    const exp = expected['longstring.fits'].comments!;
    for (const [k, c] of Object.entries(exp)) expect(headerCard(img.header, k)?.comment).toBe(c);
    const commentary = img.header.cards.filter((c) => c.kind === 'commentary').map((c) => `${c.key} ${c.text}`);
    expect(commentary).toContain('COMMENT a comment card');
    expect(commentary).toContain('HISTORY a history card');
  });

  it('twoext.fits lists three HDUs with their EXTNAMEs', () => {
    const hdus = listHdus(load('twoext.fits'), 'twoext.fits');
    expect(hdus.map((h) => [h.kind, h.name])).toEqual([['primary', undefined], ['image', 'BN'], ['image', 'VX']]);
  });

  it('the dither sequence is the standard one: 10000th seed 1043618065 (FITS 4.0 s.10.2.2)', () => {
    expect(ditherRandoms().lastSeed).toBe(1043618065);
  });

  it('an EXTNAME that is absent is an error naming the file and the HDUs present', () => {
    expect(() => readFitsImage(load('twoext.fits'), 'twoext.fits', { extname: 'BX' }))
      .toThrow(/twoext\.fits: EXTNAME 'BX': not found \(the file has HDU 0 \(primary\), HDU 1 \(BN\), HDU 2 \(VX\)\)/);
  });
});

describe('reading into a caller-owned buffer', () => {
  it('fills `into` when it has the pixel count, and allocates otherwise', () => {
    const bytes = load('bitpix-64.fits');
    const into = new Float64Array(48).fill(7);
    const a = readFitsImage(bytes, 'b.fits', {}, { into });
    expect(a.values).toBe(into);
    const exp = expected['bitpix-64.fits'].values;
    expect(Array.from(into, (v) => (Number.isNaN(v) ? null : v))).toEqual(exp);
    const b = readFitsImage(bytes, 'b.fits', {}, { into: new Float64Array(3) });
    expect(b.values.length).toBe(48);
  });
});
