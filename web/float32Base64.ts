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
  const sym = (i: number): number => {
    const c = text.charCodeAt(i);
    const v = c < 128 ? LOOKUP[c] : -1;
    if (v < 0) throw new InputError(source, 'data', `is not valid base64 (symbol at ${i})`);
    return v;
  };
  // Four symbols make three bytes; the tail (2 or 3 symbols) makes 1 or 2.
  const whole = end - (end % 4);
  let o = 0;
  for (let i = 0; i < whole; i += 4) {
    const n = (sym(i) << 18) | (sym(i + 1) << 12) | (sym(i + 2) << 6) | sym(i + 3);
    out[o++] = n >> 16;
    out[o++] = (n >> 8) & 0xff;
    out[o++] = n & 0xff;
  }
  const rest = end - whole;
  if (rest >= 2) {
    const n = (sym(whole) << 18) | (sym(whole + 1) << 12) | (rest === 3 ? sym(whole + 2) << 6 : 0);
    out[o++] = n >> 16;
    if (rest === 3) out[o++] = (n >> 8) & 0xff;
  }
  return out;
}

const LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/** The engine's own decoder (Uint8Array.fromBase64) where it exists: newer browsers. */
const nativeFromBase64 = (Uint8Array as unknown as { fromBase64?: (text: string) => Uint8Array }).fromBase64;

function decodeBytes(text: string, source: string): Uint8Array {
  if (nativeFromBase64) {
    try {
      return nativeFromBase64(text);
    } catch {
      // Fall through: ours names the bad symbol.
    }
  }
  return base64ToBytes(text, source);
}

/** Float32 values (little-endian) of a base64 text; expectedLength checks the count when given. */
export function decodeFloat32Base64(text: string, expectedLength?: number, source = 'map'): Float32Array {
  const bytes = decodeBytes(text, source);
  if (bytes.length % 4 !== 0) {
    throw new InputError(source, 'data', `holds ${bytes.length} bytes, not a whole number of float32 values`);
  }
  const n = bytes.length / 4;
  if (expectedLength !== undefined && n !== expectedLength) {
    throw new InputError(source, 'data', `holds ${n} values where nx*ny = ${expectedLength}`);
  }
  // The bytes are a fresh buffer at offset 0: on a little-endian machine (every browser we know)
  // they are the float32 array already.
  if (LITTLE_ENDIAN && bytes.byteOffset === 0) return new Float32Array(bytes.buffer, 0, n);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out = new Float32Array(n);
  for (let i = 0; i < n; i++) out[i] = view.getFloat32(4 * i, true);
  return out;
}
