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

/** Values per chunk: big-endian words are assembled into a small host-order buffer that stays in cache. */
const CHUNK = 65536;

/**
 * Decodes n stored big-endian values at bytes[start] and writes physical values into out, in one
 * pass per chunk (no copy of the whole array). `bytes` is not modified.
 */
export function decodeStored(bytes: Uint8Array, start: number, n: number, bitpix: number, s: ScaleAndBlank, out: Float64Array): void {
  const b = bytes;
  if (bitpix === 64 || !LITTLE_ENDIAN_HOST) {
    const dv = new DataView(b.buffer, b.byteOffset + start, n * (Math.abs(bitpix) / 8));
    const size = Math.abs(bitpix) / 8;
    for (let c = 0; c < n; c += CHUNK) {
      const m = Math.min(CHUNK, n - c);
      const stored = bitpix === 64 ? new BigInt64Array(m) : new Float64Array(m);
      for (let i = 0; i < m; i++) {
        const at = (c + i) * size;
        if (bitpix === 64) (stored as BigInt64Array)[i] = dv.getBigInt64(at);
        else (stored as Float64Array)[i] = bitpix === 8 ? dv.getUint8(at) : bitpix === 16 ? dv.getInt16(at) : bitpix === 32 ? dv.getInt32(at) : bitpix === -32 ? dv.getFloat32(at) : dv.getFloat64(at);
      }
      toPhysical(stored, s, out, c);
    }
    return;
  }
  if (bitpix === 8) {
    toPhysical(b.subarray(start, start + n), s, out);
    return;
  }
  if (bitpix === 16) {
    const v = new Int16Array(CHUNK);
    for (let c = 0; c < n; c += CHUNK) {
      const m = Math.min(CHUNK, n - c);
      for (let i = 0, j = start + 2 * c; i < m; i++, j += 2) v[i] = (b[j] << 8) | b[j + 1];
      toPhysical(m === CHUNK ? v : v.subarray(0, m), s, out, c);
    }
    return;
  }
  if (bitpix === 32 || bitpix === -32) {
    const u = new Uint32Array(CHUNK);
    const v = bitpix === 32 ? new Int32Array(u.buffer) : new Float32Array(u.buffer);
    for (let c = 0; c < n; c += CHUNK) {
      const m = Math.min(CHUNK, n - c);
      for (let i = 0, j = start + 4 * c; i < m; i++, j += 4) u[i] = (b[j] << 24) | (b[j + 1] << 16) | (b[j + 2] << 8) | b[j + 3];
      toPhysical(m === CHUNK ? v : v.subarray(0, m), s, out, c);
    }
    return;
  }
  // -64: the high word comes first in the file, second in a little-endian host.
  const u = new Uint32Array(2 * CHUNK);
  const v = new Float64Array(u.buffer);
  for (let c = 0; c < n; c += CHUNK) {
    const m = Math.min(CHUNK, n - c);
    for (let i = 0, j = start + 8 * c; i < 2 * m; i += 2, j += 8) {
      u[i + 1] = (b[j] << 24) | (b[j + 1] << 16) | (b[j + 2] << 8) | b[j + 3];
      u[i] = (b[j + 4] << 24) | (b[j + 5] << 16) | (b[j + 6] << 8) | b[j + 7];
    }
    toPhysical(m === CHUNK ? v : v.subarray(0, m), s, out, c);
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
