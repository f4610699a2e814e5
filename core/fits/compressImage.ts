// Writing a float image as a tile-compressed HDU (FITS Standard 4.0, section 10): each tile is
// quantized (step = noise / quantizeLevel, zero point at the tile's mid-range, subtractive
// dithering by default) and coded with RICE_1 or GZIP_1; tiles that cannot be quantized (no noise
// estimate, or a range too wide for 32-bit integers) are stored losslessly as gzip'd float32 in
// GZIP_COMPRESSED_DATA. NaN pixels get the ZBLANK integer.

import { gzipSync } from 'fflate';
import { InputError } from '../inputError.js';
import type { FitsKeyword } from './cards.js';
import { headerBytes } from './cards.js';
import { BLOCK_LENGTH } from './header.js';
import type { Quantization } from './quantize.js';
import { QUANTIZED_NULL_VALUE, quantize, tileNoise } from './quantize.js';
import { riceEncode } from './rice.js';

export interface CompressionSpec {
  readonly type: 'RICE_1' | 'GZIP_1';
  /** Tile size [ZTILE1, ZTILE2] (default one image row per tile, as the convention suggests). */
  readonly tile?: readonly [number, number];
  /** Quantization step = noise / quantizeLevel (default 16: errors far below the noise). */
  readonly quantizeLevel?: number;
  /** Default SUBTRACTIVE_DITHER_1. */
  readonly method?: Quantization;
  /** ZDITHER0, 1..10000 (default 1). */
  readonly zdither0?: number;
}

/** The bytes (header and padded data) of a compressed image HDU. */
export function compressedHduBytes(values: ArrayLike<number>, nx: number, ny: number, spec: CompressionSpec, keywords: readonly FitsKeyword[]): Uint8Array {
  const [tx, ty] = spec.tile ?? [nx, 1];
  if (!Number.isInteger(tx) || !Number.isInteger(ty) || tx < 1 || ty < 1) throw new InputError('FITS writer', 'tile', `must be positive integers, got ${tx} x ${ty}`);
  const q = spec.quantizeLevel ?? 16;
  if (!(q > 0)) throw new InputError('FITS writer', 'quantizeLevel', `must be positive, got ${q}`);
  const method = spec.method ?? 'SUBTRACTIVE_DITHER_1';
  const zdither0 = spec.zdither0 ?? 1;
  if (!Number.isInteger(zdither0) || zdither0 < 1 || zdither0 > 10000) throw new InputError('FITS writer', 'zdither0', `must be 1..10000, got ${zdither0}`);
  const cx = Math.ceil(nx / tx), cy = Math.ceil(ny / ty);
  const ntiles = cx * cy;
  const rows = new DataView(new ArrayBuffer(32 * ntiles));
  const pieces: Uint8Array[] = [];
  let heap = 0, maxData = 0, maxGzip = 0;
  let anyNaN = false;
  for (let k = 0; k < ntiles; k++) {
    const ox = (k % cx) * tx, oy = Math.floor(k / cx) * ty;
    const w = Math.min(tx, nx - ox), h = Math.min(ty, ny - oy);
    const tile = new Float64Array(w * h);
    let lo = Infinity, hi = -Infinity;
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const v = values[(oy + y) * nx + ox + x];
        tile[y * w + x] = v;
        if (Number.isNaN(v)) anyNaN = true;
        else { if (v < lo) lo = v; if (v > hi) hi = v; }
      }
    }
    const noise = tileNoise(tile, w, h);
    const scale = noise / q;
    const zero = Number.isFinite(lo) ? (lo + hi) / 2 : 0;
    let ints: Int32Array | undefined;
    if (scale > 0 && Number.isFinite(scale) && (hi - lo) / scale < 4e9) {
      ints = quantize(tile, { scale, zero, method, tile: k + 1, zdither0 });
    }
    let data: Uint8Array, gz: Uint8Array;
    if (ints) {
      if (spec.type === 'RICE_1') data = riceEncode(ints, { bytePix: 4, blockSize: 32 });
      else {
        const raw = new Uint8Array(4 * ints.length);
        const dv = new DataView(raw.buffer);
        for (let i = 0; i < ints.length; i++) dv.setInt32(4 * i, ints[i]);
        data = gzipSync(raw, { level: 6, mtime: 0 });
      }
      gz = new Uint8Array(0);
    } else {
      const raw = new Uint8Array(4 * tile.length);
      const dv = new DataView(raw.buffer);
      for (let i = 0; i < tile.length; i++) dv.setFloat32(4 * i, tile[i]);
      data = new Uint8Array(0);
      gz = gzipSync(raw, { level: 6, mtime: 0 });
    }
    const r = 32 * k;
    rows.setInt32(r, data.length); rows.setInt32(r + 4, heap);
    pieces.push(data); heap += data.length;
    rows.setInt32(r + 8, gz.length); rows.setInt32(r + 12, heap);
    pieces.push(gz); heap += gz.length;
    rows.setFloat64(r + 16, ints ? scale : 1);
    rows.setFloat64(r + 24, ints ? zero : 0);
    maxData = Math.max(maxData, data.length);
    maxGzip = Math.max(maxGzip, gz.length);
  }
  const dithered = method !== 'NO_DITHER';
  const header = headerBytes([
    { key: 'XTENSION', value: 'BINTABLE', comment: 'binary table holding a compressed image' },
    { key: 'BITPIX', value: 8 },
    { key: 'NAXIS', value: 2 },
    { key: 'NAXIS1', value: 32, comment: 'bytes per tile row' },
    { key: 'NAXIS2', value: ntiles, comment: 'tiles' },
    { key: 'PCOUNT', value: heap, comment: 'heap bytes' },
    { key: 'GCOUNT', value: 1 },
    { key: 'TFIELDS', value: 4 },
    { key: 'TTYPE1', value: 'COMPRESSED_DATA' },
    { key: 'TFORM1', value: `1PB(${maxData})` },
    { key: 'TTYPE2', value: 'GZIP_COMPRESSED_DATA' },
    { key: 'TFORM2', value: `1PB(${maxGzip})` },
    { key: 'TTYPE3', value: 'ZSCALE' },
    { key: 'TFORM3', value: '1D' },
    { key: 'TTYPE4', value: 'ZZERO' },
    { key: 'TFORM4', value: '1D' },
    { key: 'ZIMAGE', value: true, comment: 'a tile-compressed image' },
    { key: 'ZTENSION', value: 'IMAGE' },
    { key: 'ZBITPIX', value: -32 },
    { key: 'ZNAXIS', value: 2 },
    { key: 'ZNAXIS1', value: nx },
    { key: 'ZNAXIS2', value: ny },
    { key: 'ZPCOUNT', value: 0 },
    { key: 'ZGCOUNT', value: 1 },
    { key: 'ZTILE1', value: tx },
    { key: 'ZTILE2', value: ty },
    { key: 'ZCMPTYPE', value: spec.type },
    ...(spec.type === 'RICE_1' ? [
      { key: 'ZNAME1', value: 'BLOCKSIZE' }, { key: 'ZVAL1', value: 32 },
      { key: 'ZNAME2', value: 'BYTEPIX' }, { key: 'ZVAL2', value: 4 },
    ] : []),
    { key: 'ZQUANTIZ', value: method },
    ...(dithered ? [{ key: 'ZDITHER0', value: zdither0, comment: 'dither seed' }] : []),
    ...(anyNaN ? [{ key: 'ZBLANK', value: QUANTIZED_NULL_VALUE, comment: 'integer marking NaN' }] : []),
    ...keywords,
  ]);
  const dataBytes = 32 * ntiles + heap;
  const out = new Uint8Array(header.length + Math.ceil(dataBytes / BLOCK_LENGTH) * BLOCK_LENGTH);
  out.set(header, 0);
  out.set(new Uint8Array(rows.buffer), header.length);
  let at = header.length + 32 * ntiles;
  for (const p of pieces) { out.set(p, at); at += p.length; }
  return out;
}
