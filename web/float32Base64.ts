// Maps arrive as little-endian float32 in base64 (docs/api.md). Decoded by hand so the same code
// runs in the page and under Node, and so a 1024^2 map decodes without building a string of bytes.

import { InputError } from '../core/inputError.js';

const ALPHABET = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
const LOOKUP = new Int16Array(128).fill(-1);
for (let i = 0; i < ALPHABET.length; i++) LOOKUP[ALPHABET.charCodeAt(i)] = i;
// The URL-safe alphabet too, in case a proxy rewrote it.
LOOKUP['-'.charCodeAt(0)] = 62;
LOOKUP['_'.charCodeAt(0)] = 63;

/** Bytes of a base64 text (padding optional, no whitespace). Throws InputError on a bad symbol. */
export function base64ToBytes(text: string, source = 'map'): Uint8Array {
  let end = text.length;
  while (end > 0 && text.charCodeAt(end - 1) === 61 /* = */) end--;
  if (end % 4 === 1) throw new InputError(source, 'data', 'is not valid base64 (length)');
  const out = new Uint8Array(Math.floor((end * 3) / 4));
  let o = 0;
  let acc = 0;
  let bits = 0;
  for (let i = 0; i < end; i++) {
    const c = text.charCodeAt(i);
    const v = c < 128 ? LOOKUP[c] : -1;
    if (v < 0) throw new InputError(source, 'data', `is not valid base64 (symbol at ${i})`);
    acc = (acc << 6) | v;
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out[o++] = (acc >> bits) & 0xff;
    }
  }
  return out;
}

/** Float32 values (little-endian) of a base64 text; expectedLength checks the count when given. */
export function decodeFloat32Base64(text: string, expectedLength?: number, source = 'map'): Float32Array {
  const bytes = base64ToBytes(text, source);
  if (bytes.length % 4 !== 0) {
    throw new InputError(source, 'data', `holds ${bytes.length} bytes, not a whole number of float32 values`);
  }
  const n = bytes.length / 4;
  if (expectedLength !== undefined && n !== expectedLength) {
    throw new InputError(source, 'data', `holds ${n} values where nx*ny = ${expectedLength}`);
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out = new Float32Array(n);
  for (let i = 0; i < n; i++) out[i] = view.getFloat32(4 * i, true);
  return out;
}
