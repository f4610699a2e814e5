// Header parsing stays linear and bounded: a long string over thousands of CONTINUE cards is
// joined exactly (FITS Standard 4.0, section 4.2.1.2), and a header with more cards than
// MAX_HEADER_CARDS is refused with the file, the HDU and the bound named, before it is read on.
import { describe, expect, it } from 'vitest';
import { headerBytes } from '../../core/fits/cards.js';
import { MAX_HEADER_CARDS, headerValue, parseHeader } from '../../core/fits/header.js';
import { listHdus } from '../../core/fits/hduList.js';

/** A primary header (no data) with one long string keyword of `pieces` x 67 characters. */
function longStringHeader(pieces: number): { bytes: Uint8Array; value: string } {
  let value = '';
  for (let i = 0; i < pieces; i++) value += String(i % 10).repeat(66) + "'";
  const bytes = headerBytes([
    { key: 'SIMPLE', value: true }, { key: 'BITPIX', value: 8 }, { key: 'NAXIS', value: 0 },
    { key: 'LONGVAL', value, comment: 'a long one' }, { key: 'AFTER', value: 7 },
  ]);
  return { bytes, value };
}

describe('FITS header: CONTINUE cards and the card bound', () => {
  it('a string over 9000 CONTINUE cards reads back exactly, with the keywords after it', () => {
    const { bytes, value } = longStringHeader(9000);
    const h = parseHeader(bytes, 0, 'long.fits', 'HDU 0');
    expect(h.cards.length).toBeLessThan(10);
    expect(headerValue(h, 'LONGVAL')).toBe(value);
    expect(headerValue(h, 'AFTER')).toBe(7);
    expect(h.byteLength).toBe(bytes.length);
  });

  it('a header of 20000 CONTINUE cards is refused, naming the file, the HDU and the bound', () => {
    const { bytes } = longStringHeader(20_000);
    expect(() => listHdus(bytes, 'hostile.fits')).toThrow(new RegExp(`^hostile\\.fits: HDU 0 \\(primary\\) header: has more than ${MAX_HEADER_CARDS} cards before END`));
  });

  it('a CONTINUE after a string that does not end in & is commentary, as before', () => {
    const card = (s: string) => s.padEnd(80, ' ');
    const text = [
      card("SIMPLE  =                    T"), card('BITPIX  =                    8'), card('NAXIS   =                    0'),
      card("A       = 'one&'"), card("CONTINUE  'two'"), card("CONTINUE  'three'"), card("B       = 'x'"), card('END'),
    ].join('').padEnd(2880, ' ');
    const h = parseHeader(new TextEncoder().encode(text), 0, 'c.fits', 'HDU 0');
    expect(headerValue(h, 'A')).toBe('onetwo');
    expect(h.cards.filter((c) => c.key === 'CONTINUE').map((c) => c.kind)).toEqual(['commentary']);
    expect(headerValue(h, 'B')).toBe('x');
  });
});
