// Tile-compressed images (FITS Standard 4.0, section 10, "tiled image compression"): a binary
// table with ZIMAGE = T whose rows are tiles of the image. Supported: ZCMPTYPE RICE_1, GZIP_1 and
// GZIP_2; integer images (ZBITPIX 8/16/32, GZIP also 64) and floats, either quantized (ZSCALE,
// ZZERO, ZQUANTIZ NO_DITHER / SUBTRACTIVE_DITHER_1 / SUBTRACTIVE_DITHER_2, ZDITHER0, ZBLANK) or
// stored losslessly (GZIP_COMPRESSED_DATA, or ZQUANTIZ = 'NONE').
// Before any allocation, each tile's pixel count is checked against its compressed bytes: a
// Rice block needs at least FSBITS bits and deflate expands at most 1032:1 (RFC 1951 block limits).

import { gunzipSync } from 'fflate';
import { InputError } from '../inputError.js';
import type { BinaryTable, TableColumn } from './binaryTable.js';
import { findColumn, readArrayCell, readBinaryTable, readCell } from './binaryTable.js';
import { crc32 } from './crc32.js';
import type { FitsHeader } from './header.js';
import { headerCard, headerInteger, headerNumber, headerString, requiredInteger } from './header.js';
import type { Hdu } from './hduList.js';
import { hduLabel } from './hduList.js';
import { scaleAndBlank, toPhysical } from './imageData.js';
import type { Quantization } from './quantize.js';
import { unquantize } from './quantize.js';
import type { RiceParams } from './rice.js';
import { RiceDecodeError, riceDecode, riceMinBytes } from './rice.js';

export interface DecodedImage {
  readonly axes: readonly number[];
  readonly bitpix: number;
  readonly values: Float64Array;
}

/** True when the HDU is a tile-compressed image (ZIMAGE = T in a binary table). */
export function isCompressedImage(hdu: Hdu): boolean {
  return hdu.kind === 'bintable' && headerCard(hdu.header, 'ZIMAGE')?.value === true;
}

/** Deflate cannot expand by more than this factor (stored-length limits of RFC 1951). */
const MAX_DEFLATE_RATIO = 1032;

function gunzipChecked(data: Uint8Array, expected: number, source: string, field: string): Uint8Array {
  if (data.length < 18 || data[0] !== 0x1f || data[1] !== 0x8b) throw new InputError(source, field, 'tile is not a gzip stream');
  const n = data.length;
  const isize = (data[n - 4] | (data[n - 3] << 8) | (data[n - 2] << 16) | (data[n - 1] << 24)) >>> 0;
  if (isize !== expected % 2 ** 32) throw new InputError(source, field, `gzip stream holds ${isize} bytes but the tile needs ${expected}`);
  if (expected > n * MAX_DEFLATE_RATIO + 1024) throw new InputError(source, field, `tile of ${n} compressed bytes cannot hold ${expected} bytes`);
  let out: Uint8Array;
  try {
    out = gunzipSync(data, { out: new Uint8Array(expected) });
  } catch (e) {
    throw new InputError(source, field, `corrupt gzip data: ${(e as Error).message}`);
  }
  if (out.length !== expected) throw new InputError(source, field, `gzip stream inflated to ${out.length} bytes, expected ${expected}`);
  const crc = (data[n - 8] | (data[n - 7] << 8) | (data[n - 6] << 16) | (data[n - 5] << 24)) >>> 0;
  if (crc32(out) !== crc) throw new InputError(source, field, 'corrupt gzip data: CRC-32 mismatch');
  return out;
}

/** Undoes GZIP_2's byte shuffle (all first bytes, then all second bytes, ...). */
function unshuffle(data: Uint8Array, size: number): Uint8Array {
  if (size === 1) return data;
  const n = data.length / size;
  const out = new Uint8Array(data.length);
  for (let b = 0; b < size; b++) for (let i = 0; i < n; i++) out[i * size + b] = data[b * n + i];
  return out;
}

/** Big-endian integers of `size` bytes into an Int32Array (64-bit ones into doubles). */
function readBigEndianInts(data: Uint8Array, size: number, n: number, out: Int32Array): void {
  const dv = new DataView(data.buffer, data.byteOffset, data.byteLength);
  if (size === 4) for (let i = 0; i < n; i++) out[i] = dv.getInt32(4 * i);
  else if (size === 2) for (let i = 0; i < n; i++) out[i] = dv.getInt16(2 * i);
  else for (let i = 0; i < n; i++) out[i] = data[i];
}

function readBigEndianFloats(data: Uint8Array, size: number, n: number, out: Float64Array): void {
  const dv = new DataView(data.buffer, data.byteOffset, data.byteLength);
  if (size === 4) for (let i = 0; i < n; i++) out[i] = dv.getFloat32(4 * i);
  else for (let i = 0; i < n; i++) out[i] = dv.getFloat64(8 * i);
}

function compressionParams(h: FitsHeader, source: string, where: string): Map<string, number | string> {
  const params = new Map<string, number | string>();
  for (let i = 1; i <= 999; i++) {
    const name = headerString(h, `ZNAME${i}`, source, where);
    if (name === undefined) break;
    const v = headerCard(h, `ZVAL${i}`)?.value;
    if (typeof v === 'number' || typeof v === 'string') params.set(name.trim().toUpperCase(), v);
  }
  return params;
}

interface TileLayout {
  readonly axes: number[];
  readonly tile: number[];
  readonly counts: number[];
  readonly ntiles: number;
}

function layout(h: FitsHeader, source: string, where: string): TileLayout {
  const znaxis = requiredInteger(h, 'ZNAXIS', source, where);
  if (znaxis < 1 || znaxis > 999) throw new InputError(source, `${where} ZNAXIS`, `must be 1..999, got ${znaxis}`);
  const axes: number[] = [], tile: number[] = [], counts: number[] = [];
  let ntiles = 1;
  for (let i = 1; i <= znaxis; i++) {
    const n = requiredInteger(h, `ZNAXIS${i}`, source, where);
    if (n < 0 || !Number.isSafeInteger(n)) throw new InputError(source, `${where} ZNAXIS${i}`, `must be a non-negative integer, got ${n}`);
    const t = headerInteger(h, `ZTILE${i}`, source, where) ?? (i === 1 ? n : 1);
    if (t < 1 || !Number.isSafeInteger(t)) throw new InputError(source, `${where} ZTILE${i}`, `must be a positive integer, got ${t}`);
    axes.push(n);
    tile.push(t);
    const c = Math.ceil(n / t);
    counts.push(c);
    ntiles *= c;
  }
  return { axes, tile, counts, ntiles };
}

/** Origin and size of tile k (0-based, first axis fastest). */
function tileBox(l: TileLayout, k: number): { origin: number[]; size: number[]; npix: number } {
  const origin: number[] = [], size: number[] = [];
  let npix = 1;
  let rest = k;
  for (let d = 0; d < l.axes.length; d++) {
    const c = rest % l.counts[d];
    rest = Math.floor(rest / l.counts[d]);
    const o = c * l.tile[d];
    const s = Math.min(l.tile[d], l.axes[d] - o);
    origin.push(o);
    size.push(s);
    npix *= s;
  }
  return { origin, size, npix };
}

/** Copies a decoded tile (first axis fastest) into its place in the image. */
function placeTile(tileVals: Float64Array, box: { origin: number[]; size: number[] }, axes: number[], image: Float64Array): void {
  const dims = axes.length;
  const strides: number[] = [1];
  for (let d = 1; d < dims; d++) strides.push(strides[d - 1] * axes[d - 1]);
  const rowLen = box.size[0];
  const rows = box.size.slice(1).reduce((a, b) => a * b, 1);
  const idx = new Array<number>(dims).fill(0);
  for (let r = 0; r < rows; r++) {
    let off = box.origin[0];
    for (let d = 1; d < dims; d++) off += (box.origin[d] + idx[d]) * strides[d];
    image.set(tileVals.subarray(r * rowLen, (r + 1) * rowLen), off);
    for (let d = 1; d < dims; d++) {
      if (++idx[d] < box.size[d]) break;
      idx[d] = 0;
    }
  }
}

function cellOrKeyword(bytes: Uint8Array, t: BinaryTable, col: TableColumn | undefined, h: FitsHeader, key: string, row: number, source: string, where: string): number | undefined {
  if (col) return readCell(bytes, t, col, row);
  return headerNumber(h, key, source, where);
}

/**
 * Decodes a tile-compressed image HDU into physical values. `maxPixels` bounds the image size.
 * Throws InputError naming the source, the HDU (and the tile) and the problem.
 */
export function decodeCompressedImage(bytes: Uint8Array, hdu: Hdu, source: string, maxPixels: number): DecodedImage {
  const where = hduLabel(hdu.index, hdu.name);
  const h = hdu.header;
  const table = readBinaryTable(bytes, hdu, source);
  const cmp = (headerString(h, 'ZCMPTYPE', source, where) ?? '').trim().toUpperCase();
  if (cmp !== 'RICE_1' && cmp !== 'GZIP_1' && cmp !== 'GZIP_2') {
    throw new InputError(source, `${where} ZCMPTYPE`, `'${cmp}' is not supported (RICE_1, GZIP_1 and GZIP_2 are)`);
  }
  const zbitpix = requiredInteger(h, 'ZBITPIX', source, where);
  if (![8, 16, 32, 64, -32, -64].includes(zbitpix)) throw new InputError(source, `${where} ZBITPIX`, `must be 8, 16, 32, 64, -32 or -64, got ${zbitpix}`);
  const l = layout(h, source, where);
  const total = l.axes.reduce((a, b) => a * b, 1);
  if (total > maxPixels) throw new InputError(source, `${where} ZNAXIS`, `image of ${l.axes.join(' x ')} pixels exceeds the limit of ${maxPixels} pixels`);
  if (l.ntiles !== table.rows) throw new InputError(source, `${where} NAXIS2`, `table has ${table.rows} rows but ZNAXISn/ZTILEn give ${l.ntiles} tiles`);

  const dataCol = findColumn(table, 'COMPRESSED_DATA');
  if (!dataCol) throw new InputError(source, `${where} COMPRESSED_DATA`, 'column is missing');
  const gzipCol = findColumn(table, 'GZIP_COMPRESSED_DATA');
  const rawCol = findColumn(table, 'UNCOMPRESSED_DATA');
  const scaleCol = findColumn(table, 'ZSCALE');
  const zeroCol = findColumn(table, 'ZZERO');
  const blankCol = findColumn(table, 'ZBLANK');
  const isFloat = zbitpix < 0;
  const zquantiz = (headerString(h, 'ZQUANTIZ', source, where) ?? 'NO_DITHER').trim().toUpperCase();
  const quantized = isFloat && zquantiz !== 'NONE' && (scaleCol !== undefined || headerCard(h, 'ZSCALE') !== undefined);
  if (quantized && !['NO_DITHER', 'SUBTRACTIVE_DITHER_1', 'SUBTRACTIVE_DITHER_2'].includes(zquantiz)) {
    throw new InputError(source, `${where} ZQUANTIZ`, `'${zquantiz}' is not a known quantization (NO_DITHER, SUBTRACTIVE_DITHER_1, SUBTRACTIVE_DITHER_2)`);
  }
  // ZDITHER0 defaults to 1 when absent (from memory: the reference library's behaviour).
  const zdither0 = headerInteger(h, 'ZDITHER0', source, where) ?? 1;
  if (quantized && zquantiz !== 'NO_DITHER' && (zdither0 < 1 || zdither0 > 10000)) {
    throw new InputError(source, `${where} ZDITHER0`, `must be 1..10000, got ${zdither0}`);
  }
  const params = compressionParams(h, source, where);
  const blockSize = Number(params.get('BLOCKSIZE') ?? 32);
  const bytePixDefault = isFloat ? 4 : Math.min(4, Math.abs(zbitpix) / 8);
  const bytePix = Number(params.get('BYTEPIX') ?? bytePixDefault);
  if (cmp === 'RICE_1') {
    if (!Number.isInteger(blockSize) || blockSize < 1 || blockSize > 1 << 16) throw new InputError(source, `${where} ZVALn`, `BLOCKSIZE must be a positive integer, got ${params.get('BLOCKSIZE')}`);
    if (bytePix !== 1 && bytePix !== 2 && bytePix !== 4) throw new InputError(source, `${where} ZVALn`, `BYTEPIX must be 1, 2 or 4, got ${params.get('BYTEPIX')}`);
    if (zbitpix === 64 || (isFloat && !quantized)) throw new InputError(source, `${where} ZCMPTYPE`, `RICE_1 cannot hold ${isFloat ? 'unquantized floats' : '64-bit integers'}`);
  }
  const rice: RiceParams = { bytePix: bytePix as 1 | 2 | 4, blockSize };
  // Integer images: BLANK/ZBLANK and BSCALE/BZERO apply after decompression.
  const intScale = isFloat ? undefined : scaleAndBlank(h, zbitpix, source, where);
  const zblankKey = headerInteger(h, 'ZBLANK', source, where);

  // Pass 1: descriptors only; check each tile's claim against its bytes before allocating.
  let maxTile = 0;
  for (let k = 0; k < l.ntiles; k++) {
    const { npix } = tileBox(l, k);
    const tf = `${where} tile ${k + 1}`;
    const c = readArrayCell(bytes, table, dataCol, k, source, tf);
    if (c.data.length > 0) {
      if (cmp === 'RICE_1' && c.data.length < riceMinBytes(npix, rice)) {
        throw new InputError(source, tf, `${c.data.length} compressed bytes cannot hold ${npix} Rice-coded pixels`);
      }
      if (cmp !== 'RICE_1' && npix * 8 > c.data.length * MAX_DEFLATE_RATIO + 1024) {
        throw new InputError(source, tf, `${c.data.length} compressed bytes cannot hold ${npix} pixels`);
      }
    } else {
      const g = gzipCol ? readArrayCell(bytes, table, gzipCol, k, source, tf) : undefined;
      const r = rawCol ? readArrayCell(bytes, table, rawCol, k, source, tf) : undefined;
      if (g && g.data.length > 0) {
        if (npix * 8 > g.data.length * MAX_DEFLATE_RATIO + 1024) throw new InputError(source, tf, `${g.data.length} compressed bytes cannot hold ${npix} pixels`);
      } else if (r && r.count > 0) {
        if (r.count !== npix) throw new InputError(source, tf, `UNCOMPRESSED_DATA holds ${r.count} values but the tile has ${npix} pixels`);
      } else if (npix > 0) {
        throw new InputError(source, tf, 'holds no compressed data');
      }
    }
    if (npix > maxTile) maxTile = npix;
  }

  const image = new Float64Array(total);
  const ints = new Int32Array(maxTile);
  const vals = new Float64Array(maxTile);
  const floatSize = Math.abs(zbitpix) / 8;
  for (let k = 0; k < l.ntiles; k++) {
    const box = tileBox(l, k);
    const n = box.npix;
    if (n === 0) continue;
    const tf = `${where} tile ${k + 1}`;
    const c = readArrayCell(bytes, table, dataCol, k, source, tf);
    const out = vals.subarray(0, n);
    if (c.data.length > 0) {
      // Integers from the codec (quantized floats or an integer image).
      const intSize = quantized ? 4 : Math.abs(zbitpix) / 8;
      if (cmp === 'RICE_1') {
        try {
          riceDecode(c.data, n, rice, ints);
        } catch (e) {
          if (e instanceof RiceDecodeError) throw new InputError(source, tf, `corrupt RICE_1 data: ${e.message}`);
          throw e;
        }
        if (!quantized && zbitpix === 8) for (let i = 0; i < n; i++) ints[i] &= 0xff;
        else if (!quantized && zbitpix === 16) for (let i = 0; i < n; i++) ints[i] = (ints[i] << 16) >> 16;
      } else if (!isFloat || quantized) {
        let raw = gunzipChecked(c.data, n * intSize, source, tf);
        if (cmp === 'GZIP_2') raw = unshuffle(raw, intSize);
        if (intSize === 8) {
          const dv = new DataView(raw.buffer, raw.byteOffset, raw.byteLength);
          const blank = zblankKey !== undefined ? BigInt(zblankKey) : intScale!.blank;
          const s = intScale!;
          for (let i = 0; i < n; i++) {
            const v = dv.getBigInt64(8 * i);
            out[i] = blank !== undefined && v === blank ? NaN : s.bzero + s.bscale * Number(v);
          }
          placeTile(out, box, l.axes, image);
          continue;
        }
        readBigEndianInts(raw, intSize, n, ints);
      } else {
        // Lossless floats in COMPRESSED_DATA (ZQUANTIZ = 'NONE').
        let raw = gunzipChecked(c.data, n * floatSize, source, tf);
        if (cmp === 'GZIP_2') raw = unshuffle(raw, floatSize);
        readBigEndianFloats(raw, floatSize, n, out);
        placeTile(out, box, l.axes, image);
        continue;
      }
      if (quantized) {
        const scale = cellOrKeyword(bytes, table, scaleCol, h, 'ZSCALE', k, source, where);
        const zero = cellOrKeyword(bytes, table, zeroCol, h, 'ZZERO', k, source, where) ?? 0;
        if (scale === undefined || !Number.isFinite(scale) || !Number.isFinite(zero)) {
          throw new InputError(source, `${tf} ZSCALE`, `quantized tile needs finite ZSCALE and ZZERO, got ${scale} and ${zero}`);
        }
        const blank = blankCol ? readCell(bytes, table, blankCol, k) : zblankKey;
        unquantize(ints, n, {
          scale, zero, method: zquantiz as Quantization, tile: k + 1, zdither0, float32: zbitpix === -32,
          ...(blank !== undefined && { blank }),
        }, out);
      } else {
        const s = intScale!;
        const zb = blankCol ? readCell(bytes, table, blankCol, k) : zblankKey;
        const blank = zb !== undefined ? BigInt(zb) : s.blank;
        toPhysical(ints.subarray(0, n), { bscale: s.bscale, bzero: s.bzero, ...(blank !== undefined && { blank }) }, out);
      }
    } else {
      const g = gzipCol ? readArrayCell(bytes, table, gzipCol, k, source, tf) : undefined;
      if (g && g.data.length > 0) {
        // A tile stored losslessly with gzip (e.g. when quantization was not possible).
        const size = isFloat ? floatSize : Math.abs(zbitpix) / 8;
        const raw = gunzipChecked(g.data, n * size, source, tf);
        if (isFloat) readBigEndianFloats(raw, size, n, out);
        else {
          if (size === 8) throw new InputError(source, tf, 'GZIP_COMPRESSED_DATA of 64-bit integers is not supported');
          readBigEndianInts(raw, size, n, ints);
          if (zbitpix === 8) for (let i = 0; i < n; i++) ints[i] &= 0xff;
          toPhysical(ints.subarray(0, n), intScale!, out);
        }
      } else {
        const r = readArrayCell(bytes, table, rawCol!, k, source, tf);
        const type = rawCol!.arrayType ?? 'B';
        const dv = new DataView(r.data.buffer, r.data.byteOffset, r.data.byteLength);
        for (let i = 0; i < n; i++) {
          out[i] = type === 'E' ? dv.getFloat32(4 * i) : type === 'D' ? dv.getFloat64(8 * i)
            : type === 'J' ? dv.getInt32(4 * i) : type === 'I' ? dv.getInt16(2 * i) : dv.getUint8(i);
        }
        if (!isFloat) {
          const s = intScale!;
          for (let i = 0; i < n; i++) {
            out[i] = s.blank !== undefined && out[i] === Number(s.blank) ? NaN : s.bzero + s.bscale * out[i];
          }
        }
      }
    }
    placeTile(out, box, l.axes, image);
  }
  return { axes: l.axes, bitpix: zbitpix, values: image };
}
