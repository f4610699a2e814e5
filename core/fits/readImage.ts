// Reading images out of FITS bytes: the primary array, IMAGE extensions and tile-compressed
// images, selected by EXTNAME or HDU index, decoded to physical values (Float64Array, NaN = blank).

import { InputError } from '../inputError.js';
import type { FitsHeader } from './header.js';
import { headerInteger, headerValue } from './header.js';
import type { Hdu } from './hduList.js';
import type { ListOptions } from './hduList.js';
import { hduLabel, listHdus } from './hduList.js';
import { decodeStored, scaleAndBlank } from './imageData.js';
import { decodeCompressedImage, isCompressedImage } from './tileCompression.js';

export interface FitsImage {
  readonly source: string;
  /** HDU index (0 = primary). */
  readonly hdu: number;
  readonly name?: string;
  /** The HDU's header (for a compressed image, the table header with its Z keywords). */
  readonly header: FitsHeader;
  /** NAXIS1, NAXIS2, ... (NAXIS1 = x, fastest). */
  readonly axes: readonly number[];
  /** BITPIX of the stored image (ZBITPIX for compressed ones). */
  readonly bitpix: number;
  /** Physical values (BZERO + BSCALE * stored), row-major with NAXIS1 fastest; NaN = blank. */
  readonly values: Float64Array;
  /** ZCMPTYPE for a tile-compressed image. */
  readonly compression?: string;
}

export interface ImageSelection {
  /** EXTNAME, case-insensitive (with EXTVER when several share it). */
  readonly extname?: string;
  readonly extver?: number;
  /** HDU index, 0 = primary. */
  readonly index?: number;
}

export interface ReadOptions extends ListOptions {
  /** Largest image accepted, in pixels (default 2^27: 1 GiB as Float64Array, 8 x a 4096^2 map). */
  readonly maxPixels?: number;
  /**
   * A buffer the caller owns, filled instead of a fresh array when it has exactly the image's
   * pixel count (plain images only): saves the page faults of a new 8-byte-per-pixel array.
   */
  readonly into?: Float64Array;
}

export const DEFAULT_MAX_PIXELS = 2 ** 27;

/** True when an HDU holds image pixels (a non-empty array, IMAGE extension or compressed image). */
export function isImageHdu(hdu: Hdu): boolean {
  if (isCompressedImage(hdu)) return true;
  if (hdu.kind !== 'primary' && hdu.kind !== 'image') return false;
  return hdu.axes.length > 0 && hdu.axes.every((n) => n > 0);
}

function matches(hdu: Hdu, sel: ImageSelection): boolean {
  if (sel.index !== undefined) return hdu.index === sel.index;
  if (sel.extname !== undefined) {
    if ((hdu.name ?? '').toUpperCase() !== sel.extname.trim().toUpperCase()) return false;
    if (sel.extver !== undefined) return (headerInteger(hdu.header, 'EXTVER', '', '') ?? 1) === sel.extver;
    return true;
  }
  return isImageHdu(hdu);
}

/** Decodes one image HDU of a file already listed with listHdus. */
export function decodeImageHdu(bytes: Uint8Array, hdu: Hdu, source: string, options: ReadOptions = {}): FitsImage {
  const where = hduLabel(hdu.index, hdu.name);
  const maxPixels = options.maxPixels ?? DEFAULT_MAX_PIXELS;
  const base = { source, hdu: hdu.index, header: hdu.header, ...(hdu.name && { name: hdu.name }) };
  if (isCompressedImage(hdu)) {
    const d = decodeCompressedImage(bytes, hdu, source, maxPixels);
    const cmp = String(headerValue(hdu.header, 'ZCMPTYPE') ?? '').trim();
    return { ...base, axes: d.axes, bitpix: d.bitpix, values: d.values, compression: cmp };
  }
  if (hdu.kind !== 'primary' && hdu.kind !== 'image') throw new InputError(source, where, `is a ${hdu.kind} extension, not an image`);
  if (hdu.axes.length === 0 || hdu.axes.some((n) => n === 0)) throw new InputError(source, where, 'holds no image data (NAXIS = 0 or an axis of length 0)');
  if (hdu.pcount !== 0 || hdu.gcount !== 1) throw new InputError(source, where, `image must have PCOUNT 0 and GCOUNT 1, got ${hdu.pcount} and ${hdu.gcount}`);
  const n = hdu.axes.reduce((a, b) => a * b, 1);
  if (n > maxPixels) throw new InputError(source, `${where} NAXIS`, `image of ${hdu.axes.join(' x ')} pixels exceeds the limit of ${maxPixels} pixels`);
  const s = scaleAndBlank(hdu.header, hdu.bitpix, source, where);
  const values = options.into && options.into.length === n ? options.into : new Float64Array(n);
  decodeStored(bytes, hdu.dataStart, n, hdu.bitpix, s, values);
  return { ...base, axes: hdu.axes, bitpix: hdu.bitpix, values };
}

/**
 * The image selected by EXTNAME or index (default: the first HDU holding an image). Throws
 * InputError naming the file when it is not FITS, is damaged, or has no such image.
 */
export function readFitsImage(bytes: Uint8Array, source: string, select: ImageSelection = {}, options: ReadOptions = {}): FitsImage {
  const hdus = listHdus(bytes, source, options);
  const hdu = hdus.find((h) => matches(h, select));
  if (!hdu) {
    const what = select.index !== undefined ? `HDU ${select.index}` : select.extname !== undefined ? `EXTNAME '${select.extname}'` : 'an image HDU';
    const names = hdus.map((h) => hduLabel(h.index, h.name)).join(', ');
    throw new InputError(source, what, `not found (the file has ${names})`);
  }
  return decodeImageHdu(bytes, hdu, source, options);
}

/** Every image HDU of a file, decoded. */
export function readFitsImages(bytes: Uint8Array, source: string, options: ReadOptions = {}): FitsImage[] {
  return listHdus(bytes, source, options).filter(isImageHdu).map((h) => decodeImageHdu(bytes, h, source, options));
}
