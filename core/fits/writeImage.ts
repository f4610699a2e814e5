// Writing our maps as FITS: an empty primary HDU carrying provenance, then one float32 IMAGE
// extension per map (EXTNAME, BUNIT, linear WCS in Mm or a WCS given by the caller). NaN is
// written as the IEEE NaN, the blank of floating-point images (FITS Standard 4.0, section 5.3).

import { InputError } from '../inputError.js';
import type { FitsKeyword } from './cards.js';
import { headerBytes } from './cards.js';
import type { CompressionSpec } from './compressImage.js';
import { compressedHduBytes } from './compressImage.js';
import { BLOCK_LENGTH } from './header.js';

/** A linear world coordinate system for two image axes (FITS WCS paper I keywords). */
export interface ImageWcs {
  /** CTYPE1, CTYPE2 (default 'X', 'Y': plain linear axes of the local patch). */
  readonly ctype?: readonly [string, string];
  /** CUNIT1, CUNIT2 (default 'Mm'). */
  readonly cunit?: readonly [string, string];
  /** Pixel sides CDELT1, CDELT2 in CUNIT. */
  readonly cdelt: readonly [number, number];
  /** Reference pixel, 1-based (default 1, 1). */
  readonly crpix?: readonly [number, number];
  /** World coordinates at the reference pixel (default 0, 0). */
  readonly crval?: readonly [number, number];
  /** PC matrix [PC1_1, PC1_2, PC2_1, PC2_2] (written when not the identity). */
  readonly pc?: readonly [number, number, number, number];
  /** LONPOLE, LATPOLE and projection parameters (PV2_1 ...) of a spherical projection (WCS paper II). */
  readonly lonpole?: number;
  readonly latpole?: number;
  readonly pv?: Readonly<Record<string, number>>;
}

export interface ImageToWrite {
  /** EXTNAME, e.g. 'BN' or 'GTHETA'. */
  readonly name: string;
  readonly nx: number;
  readonly ny: number;
  /** nx*ny values, row-major with x fastest; NaN = no data. */
  readonly values: ArrayLike<number>;
  /** BUNIT (e.g. 'G', 'km/s', 'Mx2 s-1 cm-2'). */
  readonly bunit?: string;
  readonly wcs?: ImageWcs;
  /** Further keywords of this HDU (DATE-OBS, ...). */
  readonly keywords?: readonly FitsKeyword[];
  /** Write as a tile-compressed image (quantized float32, RICE_1 or GZIP_1) instead of plain float32. */
  readonly compression?: CompressionSpec;
}

export interface FitsToWrite {
  /** Keywords of the primary HDU: provenance (CREATOR, DATE, source files, HISTORY ...). */
  readonly primary?: readonly FitsKeyword[];
  readonly images: readonly ImageToWrite[];
}

const STRUCTURAL = new Set(['SIMPLE', 'BITPIX', 'NAXIS', 'NAXIS1', 'NAXIS2', 'EXTEND', 'XTENSION', 'PCOUNT', 'GCOUNT', 'EXTNAME', 'END', 'BSCALE', 'BZERO', 'BLANK']);

function checkExtra(keywords: readonly FitsKeyword[] | undefined, where: string): readonly FitsKeyword[] {
  for (const k of keywords ?? []) {
    const key = k.key.toUpperCase();
    if (STRUCTURAL.has(key) || /^(Z[A-Z]|T(TYPE|FORM|FIELDS|HEAP))/.test(key)) throw new InputError('FITS writer', `${where} ${k.key}`, 'is set by the writer and cannot be given');
  }
  return keywords ?? [];
}

/** The WCS keywords of an image (pixel sides as floats). */
export function wcsKeywords(wcs: ImageWcs): FitsKeyword[] {
  const ctype = wcs.ctype ?? ['X', 'Y'];
  const cunit = wcs.cunit ?? ['Mm', 'Mm'];
  const crpix = wcs.crpix ?? [1, 1];
  const crval = wcs.crval ?? [0, 0];
  const out: FitsKeyword[] = [{ key: 'WCSAXES', value: 2, comment: 'number of world coordinate axes' }];
  for (const i of [0, 1] as const) {
    const n = i + 1;
    out.push(
      { key: `CTYPE${n}`, value: ctype[i], comment: n === 1 ? 'axis along increasing column' : 'axis along increasing row' },
      { key: `CUNIT${n}`, value: cunit[i] },
      { key: `CRPIX${n}`, value: crpix[i], float: true, comment: 'reference pixel' },
      { key: `CRVAL${n}`, value: crval[i], float: true, comment: 'coordinate at the reference pixel' },
      { key: `CDELT${n}`, value: wcs.cdelt[i], float: true, comment: 'pixel side' },
    );
  }
  const pc = wcs.pc;
  if (pc && !(pc[0] === 1 && pc[1] === 0 && pc[2] === 0 && pc[3] === 1)) {
    ['PC1_1', 'PC1_2', 'PC2_1', 'PC2_2'].forEach((key, j) => out.push({ key, value: pc[j], float: true }));
  }
  if (wcs.lonpole !== undefined) out.push({ key: 'LONPOLE', value: wcs.lonpole, float: true, comment: 'native longitude of the celestial pole' });
  if (wcs.latpole !== undefined) out.push({ key: 'LATPOLE', value: wcs.latpole, float: true });
  for (const [key, value] of Object.entries(wcs.pv ?? {})) out.push({ key, value, float: true, comment: 'projection parameter' });
  return out;
}

function floatData(values: ArrayLike<number>, n: number): Uint8Array {
  const bytes = new Uint8Array(Math.ceil((4 * n) / BLOCK_LENGTH) * BLOCK_LENGTH);
  const dv = new DataView(bytes.buffer);
  for (let i = 0; i < n; i++) dv.setFloat32(4 * i, values[i]);
  return bytes;
}

/** Encodes the HDUs into FITS bytes. Throws InputError when a map's size does not match. */
export function writeFits(spec: FitsToWrite): Uint8Array {
  const parts: Uint8Array[] = [];
  parts.push(headerBytes([
    { key: 'SIMPLE', value: true, comment: 'conforms to the FITS standard' },
    { key: 'BITPIX', value: 8, comment: 'no primary data' },
    { key: 'NAXIS', value: 0 },
    { key: 'EXTEND', value: true, comment: 'image extensions follow' },
    ...checkExtra(spec.primary, 'primary'),
  ]));
  for (const img of spec.images) {
    const where = `image ${img.name}`;
    if (!Number.isInteger(img.nx) || !Number.isInteger(img.ny) || img.nx < 1 || img.ny < 1) {
      throw new InputError('FITS writer', where, `size must be positive integers, got ${img.nx} x ${img.ny}`);
    }
    if (img.values.length !== img.nx * img.ny) {
      throw new InputError('FITS writer', where, `has ${img.values.length} values but nx*ny = ${img.nx * img.ny}`);
    }
    const described: FitsKeyword[] = [
      { key: 'EXTNAME', value: img.name },
      ...(img.bunit !== undefined ? [{ key: 'BUNIT', value: img.bunit, comment: 'unit of the values' }] : []),
      ...(img.wcs ? wcsKeywords(img.wcs) : []),
      ...checkExtra(img.keywords, where),
    ];
    if (img.compression) {
      parts.push(compressedHduBytes(img.values, img.nx, img.ny, img.compression, described));
      continue;
    }
    parts.push(headerBytes([
      { key: 'XTENSION', value: 'IMAGE', comment: 'image extension' },
      { key: 'BITPIX', value: -32, comment: 'IEEE single precision' },
      { key: 'NAXIS', value: 2 },
      { key: 'NAXIS1', value: img.nx, comment: 'columns (x)' },
      { key: 'NAXIS2', value: img.ny, comment: 'rows (y)' },
      { key: 'PCOUNT', value: 0 },
      { key: 'GCOUNT', value: 1 },
      ...described,
    ]));
    parts.push(floatData(img.values, img.nx * img.ny));
  }
  const total = parts.reduce((a, p) => a + p.length, 0);
  const out = new Uint8Array(total);
  let at = 0;
  for (const p of parts) { out.set(p, at); at += p.length; }
  return out;
}
