// Bad FITS input: never a crash, a hang or an allocation the bytes cannot back; always an
// InputError naming the file, the HDU/keyword and the problem. The structure rules are those of
// FITS Standard 4.0 (sections 3-5, 7.3, 10); files come from astropy (test/fixtures/fits) and from
// our own writer.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { readFitsImage } from '../../core/fits/readImage.js';
import { writeFits } from '../../core/fits/writeImage.js';
import { frameFromFits } from '../../core/frameAssembly/assembleFrame.js';
import { checkFrame } from '../../core/frame.js';
import type { Frame } from '../../core/frame.js';
import { InputError } from '../../core/inputError.js';

const dir = join(__dirname, '..', 'fixtures', 'fits');
const load = (name: string) => new Uint8Array(readFileSync(join(dir, name)));

/** Replaces the value field (columns 11-30) of the first card with this keyword. */
function setCard(bytes: Uint8Array, key: string, value: string): Uint8Array {
  const out = bytes.slice();
  const text = new TextDecoder('latin1').decode(out);
  for (let at = 0; at < text.length; at += 80) {
    if (text.slice(at, at + 8).trimEnd() === key && text.slice(at + 8, at + 10) === '= ') {
      const field = value.padStart(20).padEnd(70);
      for (let i = 0; i < 70; i++) out[at + 10 + i] = field.charCodeAt(i);
      return out;
    }
  }
  throw new Error(`no card ${key}`);
}

function expectInputError(fn: () => unknown, source: string, pattern: RegExp): InputError {
  try {
    fn();
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    const err = e as InputError;
    expect(err.source).toBe(source);
    expect(err.message).toMatch(pattern);
    return err;
  }
  throw new Error('expected an InputError, got a result');
}

describe('bad FITS input is an InputError naming file, HDU and problem', () => {
  const plain = load('bitpix-32.fits');
  const comp = load('rice_float_dither1.fits');

  it('truncated files, at every 97th length, for plain and compressed images', () => {
    for (const [name, bytes] of [['bitpix-32.fits', plain], ['rice_float_dither1.fits', comp]] as const) {
      for (let n = 0; n < bytes.length - 2880; n += 97) {
        // Cutting inside the last block's padding leaves a complete image: those lengths are fine.
        expectInputError(() => readFitsImage(bytes.subarray(0, n), name, { extname: name.startsWith('rice') ? 'BN' : undefined }), name,
          /shorter than one 2880-byte|truncated|no END|claim \d+ data bytes but only/);
      }
    }
  });

  it('a header without END', () => {
    const text = new TextDecoder('latin1').decode(plain);
    const end = text.indexOf('END     ');
    const b = plain.slice();
    for (let i = 0; i < 3; i++) b[end + i] = 32;
    expectInputError(() => readFitsImage(b, 'noend.fits'), 'noend.fits', /HDU 0 \(primary\) header: .*END/);
  });

  it('a wrong NAXIS: missing NAXISn, negative, too many', () => {
    expectInputError(() => readFitsImage(setCard(plain, 'NAXIS', '3'), 'n.fits'), 'n.fits', /HDU 0 \(primary\) NAXIS3: is missing although NAXIS = 3/);
    expectInputError(() => readFitsImage(setCard(plain, 'NAXIS', '-1'), 'n.fits'), 'n.fits', /NAXIS: must be 0\.\.999, got -1/);
    expectInputError(() => readFitsImage(setCard(plain, 'NAXIS', "'two'"), 'n.fits'), 'n.fits', /NAXIS: must be an integer, got 'two'/);
    expectInputError(() => readFitsImage(setCard(plain, 'BITPIX', '24'), 'n.fits'), 'n.fits', /BITPIX: must be one of/);
  });

  it('absurd NAXISn are refused against the bytes present, before any allocation', () => {
    const big = setCard(setCard(plain, 'NAXIS1', '1099511627776'), 'NAXIS2', '1099511627776');
    expectInputError(() => readFitsImage(big, 'big.fits'), 'big.fits', /claim 4\.8\d*e\+24 data bytes but only 2880 are present/);
    expectInputError(() => readFitsImage(setCard(plain, 'NAXIS1', '-8'), 'big.fits'), 'big.fits', /NAXIS1: must be a non-negative integer/);
    // A compressed image whose tiles claim far more pixels than their bytes can hold.
    const zc = setCard(setCard(comp, 'ZNAXIS1', '360000'), 'ZTILE1', '120000');
    expectInputError(() => readFitsImage(zc, 'z.fits', { extname: 'BN' }), 'z.fits', /HDU 1 \(BN\) tile 1: \d+ compressed bytes cannot hold 960000 Rice-coded pixels/);
    expectInputError(() => readFitsImage(setCard(comp, 'ZNAXIS1', '100000000'), 'z.fits', { extname: 'BN' }), 'z.fits', /exceeds the limit of 134217728 pixels/);
    expectInputError(() => readFitsImage(setCard(comp, 'ZTILE2', '1'), 'z.fits', { extname: 'BN' }), 'z.fits', /table has 9 rows but ZNAXISn\/ZTILEn give 60 tiles/);
  });

  it('a corrupt compressed tile: RICE_1 stream cut short, gzip bytes damaged, descriptor out of the heap', () => {
    // The heap of HDU 1 follows its table rows; the descriptor of tile 1 says where its bytes are.
    const g = load('gzip_float_dither1.fits');
    const hdr = new TextDecoder('latin1').decode(g.subarray(2880));
    const headerBlocks = Math.ceil((hdr.indexOf('END     ') + 80) / 2880);
    const dataStart = 2880 + headerBlocks * 2880;
    const naxis1 = Number(/NAXIS1  =\s+(\d+)/.exec(hdr)![1]);
    const rows = Number(/NAXIS2  =\s+(\d+)/.exec(hdr)![1]);
    const heap = dataStart + naxis1 * rows;
    const damaged = g.slice();
    damaged[heap + 40] ^= 0x5a;
    expectInputError(() => readFitsImage(damaged, 'g.fits', { extname: 'BN' }), 'g.fits', /HDU 1 \(BN\) tile 1: (corrupt gzip data|gzip stream)/);
    // Descriptor of row 1 pointing beyond the heap.
    const far = g.slice();
    new DataView(far.buffer).setInt32(dataStart + 4, 1 << 30);
    expectInputError(() => readFitsImage(far, 'g.fits', { extname: 'BN' }), 'g.fits', /COMPRESSED_DATA row 1: array descriptor .* points outside/);
    // A RICE_1 tile whose length is cut to 6 bytes cannot hold its pixels.
    const r = comp.slice();
    const rh = new TextDecoder('latin1').decode(r.subarray(2880));
    const rStart = 2880 + Math.ceil((rh.indexOf('END     ') + 80) / 2880) * 2880;
    new DataView(r.buffer).setInt32(rStart, 5);
    expectInputError(() => readFitsImage(r, 'r.fits', { extname: 'BN' }), 'r.fits', /tile 1: 5 compressed bytes cannot hold 96 Rice-coded pixels/);
    // All-ones bytes in place of a Rice stream: an FS code out of range.
    const junk = comp.slice();
    const len = new DataView(junk.buffer).getInt32(rStart);
    const off = new DataView(junk.buffer).getInt32(rStart + 4);
    const rHeap = rStart + Number(/NAXIS1  =\s+(\d+)/.exec(rh)![1]) * Number(/NAXIS2  =\s+(\d+)/.exec(rh)![1]);
    for (let i = 4; i < len; i++) junk[rHeap + off + i] = 0xff; // FS code 31 is beyond FSMAX + 1 = 26
    expectInputError(() => readFitsImage(junk, 'r.fits', { extname: 'BN' }), 'r.fits', /tile 1: corrupt RICE_1 data/);
  });

  it('DATASUM and CHECKSUM catch damage that would otherwise decode (FITS 4.0 s.4.4.2.7)', () => {
    const c = load('checksum_rice_float.fits');
    const ch = new TextDecoder('latin1').decode(c.subarray(2880));
    const cStart = 2880 + Math.ceil((ch.indexOf('END     ') + 80) / 2880) * 2880;
    const d = c.slice();
    d[cStart + 200] ^= 1; // inside the heap of HDU 1
    expectInputError(() => readFitsImage(d, 'c.fits', { extname: 'BN' }), 'c.fits', /HDU 1 \(BN\) DATASUM: the data sum to \d+, not \d+: the data are corrupt/);
    const h = setCard(c, 'ZDITHER0', '6');
    expectInputError(() => readFitsImage(h, 'c.fits', { extname: 'BN' }), 'c.fits', /HDU 1 \(BN\) CHECKSUM: does not verify/);
    expect(readFitsImage(h, 'c.fits', { extname: 'BN' }, { verifyChecksums: false }).values.length).toBe(560);
  });
});

describe('property: random damage to valid files gives a correct frame or an InputError (fast-check)', () => {
  const frameFile = load('checksum_frame.fits');
  const original = frameFromFits(frameFile, 'frame.fits');
  const ours = writeFits({
    primary: [{ key: 'DATE-OBS', value: '2011-02-15T00:00:00' }],
    images: ['BN', 'VX', 'VY'].map((name, k) => ({
      name, nx: 9, ny: 5, bunit: name === 'BN' ? 'G' : 'km/s', wcs: { cdelt: [0.36, 0.36] as [number, number] },
      values: Float32Array.from({ length: 45 }, (_, i) => Math.sin(i + k) * 100),
    })),
  });

  function outcome(bytes: Uint8Array): Frame | InputError {
    try {
      return frameFromFits(bytes, 'frame.fits');
    } catch (e) {
      if (e instanceof InputError) return e;
      throw e;
    }
  }
  function sameFrame(a: Frame, b: Frame): boolean {
    if (a.time !== b.time || a.nx !== b.nx || a.ny !== b.ny || a.dx !== b.dx || a.dy !== b.dy) return false;
    for (const m of ['bn', 'vx', 'vy'] as const) {
      const p = a[m], q = b[m];
      if (!p || !q || p.length !== q.length) return false;
      for (let i = 0; i < p.length; i++) if (!Object.is(p[i], q[i])) return false;
    }
    return true;
  }
  const mutation = (n: number) => fc.oneof(
    fc.record({ kind: fc.constant('byte' as const), at: fc.nat({ max: n - 1 }), value: fc.integer({ min: 0, max: 255 }) }),
    fc.record({ kind: fc.constant('cut' as const), at: fc.nat({ max: n - 1 }), value: fc.constant(0) }),
  );
  function apply(bytes: Uint8Array, m: { kind: 'byte' | 'cut'; at: number; value: number }): Uint8Array {
    if (m.kind === 'cut') return bytes.subarray(0, m.at);
    const out = bytes.slice();
    out[m.at] = m.value;
    return out;
  }

  it('checksummed astropy frame: one damaged byte or a cut gives the same frame or an InputError', () => {
    fc.assert(fc.property(mutation(frameFile.length), (m) => {
      const r = outcome(apply(frameFile, m));
      if (r instanceof InputError) return r.source === 'frame.fits' && r.message.startsWith('frame.fits: ') && r.problem.length > 0;
      return sameFrame(r, original);
    }), { numRuns: 300, seed: 20261201 });
  });

  it('checksummed astropy RICE_1 image: one damaged byte or a cut gives the same values or an InputError', () => {
    const rice = load('checksum_rice_float.fits');
    const want = readFitsImage(rice, 'rice.fits', { extname: 'BN' }).values;
    fc.assert(fc.property(mutation(rice.length), (m) => {
      let got: Float64Array;
      try {
        got = readFitsImage(apply(rice, m), 'rice.fits', { extname: 'BN' }).values;
      } catch (e) {
        if (e instanceof InputError) return e.message.startsWith('rice.fits: ');
        throw e;
      }
      return got.length === want.length && got.every((v, i) => Object.is(v, want[i]));
    }), { numRuns: 300, seed: 99 });
  });

  it('our own file, several damaged bytes: a checked frame of the declared shape, or an InputError', () => {
    fc.assert(fc.property(fc.array(mutation(ours.length), { minLength: 1, maxLength: 6 }), (ms) => {
      let b = ours;
      for (const m of ms) if (m.at < b.length) b = apply(b, m);
      const r = outcome(b);
      if (r instanceof InputError) return r.message.startsWith('frame.fits: ') && r.field.length > 0;
      checkFrame(r);
      return r.bn.length === r.nx * r.ny && Number.isFinite(r.time) && r.dx > 0;
    }), { numRuns: 300, seed: 7 });
  });
});
