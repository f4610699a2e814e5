// Decoding an uncompressed image array (FITS Standard 4.0, sections 5.2 and 5.3): big-endian
// integers (8-bit unsigned, 16/32/64-bit two's complement) or IEEE floats, then
// physical = BZERO + BSCALE * stored; integer pixels equal to BLANK become NaN.

import { InputError } from '../inputError.js';
import type { FitsHeader } from './header.js';
import { headerCard, headerNumber } from './header.js';

export interface ScaleAndBlank {
  readonly bscale: number;
  readonly bzero: number;
  /** BLANK as written (BigInt so 64-bit values compare exactly). */
  readonly blank?: bigint;
}

/** BSCALE, BZERO (defaults 1, 0) and BLANK of an image header; InputError when malformed. */
export function scaleAndBlank(header: FitsHeader, bitpix: number, source: string, where: string): ScaleAndBlank {
  const bscale = headerNumber(header, 'BSCALE', source, where) ?? 1;
  const bzero = headerNumber(header, 'BZERO', source, where) ?? 0;
  if (bscale === 0) throw new InputError(source, `${where} BSCALE`, 'is 0: every pixel would be BZERO');
  const card = headerCard(header, 'BLANK');
  let blank: bigint | undefined;
  if (card !== undefined && bitpix > 0) {
    if (card.kind !== 'integer') throw new InputError(source, `${where} BLANK`, `must be an integer, got ${card.text ?? card.kind}`);
    blank = BigInt(card.text as string);
  }
  return { bscale, bzero, ...(blank !== undefined && { blank }) };
}

const LITTLE_ENDIAN_HOST = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/** A copy of n big-endian values of `size` bytes as a host-order typed array buffer. */
function hostOrderCopy(bytes: Uint8Array, start: number, n: number, size: number): ArrayBuffer {
  const copy = bytes.slice(start, start + n * size);
  if (!LITTLE_ENDIAN_HOST || size === 1) return copy.buffer;
  if (size === 2) {
    const u = new Uint16Array(copy.buffer);
    for (let i = 0; i < n; i++) { const x = u[i]; u[i] = (x >>> 8) | ((x & 0xff) << 8); }
  } else if (size === 4) {
    const u = new Uint32Array(copy.buffer);
    for (let i = 0; i < n; i++) {
      const x = u[i];
      u[i] = ((x & 0xff) << 24) | ((x & 0xff00) << 8) | ((x >>> 8) & 0xff00) | (x >>> 24);
    }
  } else {
    const u = new Uint32Array(copy.buffer);
    for (let i = 0; i < 2 * n; i += 2) {
      const x = u[i], y = u[i + 1];
      u[i] = ((y & 0xff) << 24) | ((y & 0xff00) << 8) | ((y >>> 8) & 0xff00) | (y >>> 24);
      u[i + 1] = ((x & 0xff) << 24) | ((x & 0xff00) << 8) | ((x >>> 8) & 0xff00) | (x >>> 24);
    }
  }
  return copy.buffer;
}

/** Stored values as a typed array in host order (a copy). */
export function storedValues(bytes: Uint8Array, start: number, n: number, bitpix: number):
  Uint8Array | Int16Array | Int32Array | BigInt64Array | Float32Array | Float64Array {
  const size = Math.abs(bitpix) / 8;
  const buf = hostOrderCopy(bytes, start, n, size);
  switch (bitpix) {
    case 8: return new Uint8Array(buf);
    case 16: return new Int16Array(buf);
    case 32: return new Int32Array(buf);
    case 64: return new BigInt64Array(buf);
    case -32: return new Float32Array(buf);
    default: return new Float64Array(buf);
  }
}

/** Applies BSCALE/BZERO/BLANK to stored values, writing physical values into out. */
export function toPhysical(stored: ArrayLike<number | bigint>, s: ScaleAndBlank, out: Float64Array, offset = 0): void {
  const n = stored.length;
  const { bscale, bzero } = s;
  const identity = bscale === 1 && bzero === 0;
  if (stored instanceof BigInt64Array) {
    const blank = s.blank;
    for (let i = 0; i < n; i++) {
      const v = stored[i];
      out[offset + i] = blank !== undefined && v === blank ? NaN : bzero + bscale * Number(v);
    }
    return;
  }
  const a = stored as ArrayLike<number>;
  if (s.blank !== undefined) {
    const blank = Number(s.blank);
    for (let i = 0; i < n; i++) {
      const v = a[i];
      out[offset + i] = v === blank ? NaN : identity ? v : bzero + bscale * v;
    }
  } else if (identity) {
    if (ArrayBuffer.isView(a) && !(a instanceof DataView)) out.set(a as unknown as Float64Array, offset);
    else for (let i = 0; i < n; i++) out[offset + i] = a[i];
  } else {
    for (let i = 0; i < n; i++) out[offset + i] = bzero + bscale * a[i];
  }
}
