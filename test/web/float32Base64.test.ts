import { describe, expect, it } from 'vitest';
import { Buffer } from 'node:buffer';
import { base64ToBytes, decodeFloat32Base64 } from '../../web/float32Base64.js';
import { InputError } from '../../core/inputError.js';

describe('base64 float32 maps', () => {
  it('decodes what Node encodes (Buffer base64 as the reference), NaN included', () => {
    const values = new Float32Array([0, -1.5, 3.25e3, Number.NaN, 1e-30, -2500.125, Infinity]);
    const text = Buffer.from(values.buffer).toString('base64');
    const got = decodeFloat32Base64(text, values.length);
    expect(Array.from(got)).toEqual(Array.from(values));
  });

  it('decodes every byte pattern and length the same as Buffer', () => {
    for (let n = 0; n < 40; n++) {
      const bytes = Uint8Array.from({ length: n }, (_, i) => (i * 97 + n * 13) & 0xff);
      const text = Buffer.from(bytes).toString('base64');
      expect(Array.from(base64ToBytes(text))).toEqual(Array.from(bytes));
      expect(Array.from(base64ToBytes(text.replace(/=+$/, '')))).toEqual(Array.from(bytes));
    }
  });

  it('refuses a wrong count, a partial value and a bad symbol, naming the field', () => {
    const text = Buffer.from(new Float32Array([1, 2, 3]).buffer).toString('base64');
    expect(() => decodeFloat32Base64(text, 4, 'map bn')).toThrow(/map bn: data: holds 3 values where nx\*ny = 4/);
    expect(() => decodeFloat32Base64(Buffer.from([1, 2, 3, 4, 5]).toString('base64'))).toThrow(InputError);
    expect(() => base64ToBytes('AAA*')).toThrow(/not valid base64/);
  });
});
