// The HDU list of a FITS file (FITS Standard 4.0, sections 3 and 4.4): each HDU is a header
// followed by data of |BITPIX|/8 * GCOUNT * (PCOUNT + NAXIS1*...*NAXISm) bytes, padded to 2880.
// Every size the header claims is checked against the bytes present before anything is read.

import { InputError } from '../inputError.js';
import type { FitsHeader } from './header.js';
import { addOnesComplement, onesComplementSum } from './checksum.js';
import { BLOCK_LENGTH, headerCard, headerInteger, headerLogical, headerString, parseHeader, requiredInteger } from './header.js';

export type HduKind = 'primary' | 'image' | 'bintable' | 'table' | 'other';

export interface Hdu {
  /** 0 for the primary HDU, then 1, 2, ... */
  readonly index: number;
  readonly kind: HduKind;
  /** EXTNAME (trimmed), when present. */
  readonly name?: string;
  readonly header: FitsHeader;
  readonly bitpix: number;
  /** NAXIS1..NAXISm, NAXIS1 first (x fastest). */
  readonly axes: readonly number[];
  readonly pcount: number;
  readonly gcount: number;
  /** Byte offset of the data in the file. */
  readonly dataStart: number;
  /** Data bytes without padding. */
  readonly dataBytes: number;
}

/** "HDU 0 (primary)" or "HDU 2 (BN)": how errors name an HDU. */
export function hduLabel(index: number, name?: string): string {
  return `HDU ${index}${index === 0 ? ' (primary)' : name ? ` (${name})` : ''}`;
}

const BITPIX_VALUES = [8, 16, 32, 64, -32, -64];

export interface ListOptions {
  /** Verify DATASUM and CHECKSUM where present (default true). */
  readonly verifyChecksums?: boolean;
}

/** Checks DATASUM and CHECKSUM (FITS 4.0 s.4.4.2.7) when the header has them. */
function verifyChecksums(bytes: Uint8Array, start: number, header: FitsHeader, dataStart: number, dataBytes: number, source: string, where: string): void {
  const datasum = headerCard(header, 'DATASUM');
  const checksum = headerCard(header, 'CHECKSUM');
  if (!datasum && !checksum) return;
  const dsum = onesComplementSum(bytes, dataStart, Math.ceil(dataBytes / BLOCK_LENGTH) * BLOCK_LENGTH);
  if (datasum && datasum.value !== undefined) {
    const want = Number(datasum.value);
    if (!Number.isFinite(want) || want !== dsum) {
      throw new InputError(source, `${where} DATASUM`, `the data sum to ${dsum}, not ${datasum.value}: the data are corrupt`);
    }
  }
  if (checksum && typeof checksum.value === 'string' && !/^0*$/.test(checksum.value)) {
    const total = addOnesComplement(onesComplementSum(bytes, start, header.byteLength), dsum);
    if (total !== 0xffffffff) throw new InputError(source, `${where} CHECKSUM`, 'does not verify: the header or the data are corrupt');
  }
}

function readHdu(bytes: Uint8Array, start: number, index: number, source: string, options: ListOptions): Hdu {
  let where = hduLabel(index);
  const header = parseHeader(bytes, start, source, where);
  const first = header.cards[0];
  let kind: HduKind;
  if (index === 0) {
    if (!first || first.key !== 'SIMPLE') throw new InputError(source, where, 'does not start with SIMPLE: not a FITS file');
    if (first.value !== true) throw new InputError(source, `${where} SIMPLE`, 'is not T: the file does not conform to the FITS standard');
    kind = 'primary';
  } else {
    if (!first || first.key !== 'XTENSION') throw new InputError(source, where, 'extension header does not start with XTENSION');
    const x = String(first.value ?? '').trim().toUpperCase();
    kind = x === 'IMAGE' ? 'image' : x === 'BINTABLE' ? 'bintable' : x === 'TABLE' ? 'table' : 'other';
  }
  const extname = headerString(header, 'EXTNAME', source, where)?.trim();
  if (extname) where = hduLabel(index, extname);
  const bitpix = requiredInteger(header, 'BITPIX', source, where);
  if (!BITPIX_VALUES.includes(bitpix)) throw new InputError(source, `${where} BITPIX`, `must be one of 8, 16, 32, 64, -32, -64, got ${bitpix}`);
  const naxis = requiredInteger(header, 'NAXIS', source, where);
  if (naxis < 0 || naxis > 999) throw new InputError(source, `${where} NAXIS`, `must be 0..999, got ${naxis}`);
  const axes: number[] = [];
  let count = naxis === 0 ? 0 : 1;
  for (let i = 1; i <= naxis; i++) {
    const n = headerInteger(header, `NAXIS${i}`, source, where);
    if (n === undefined) throw new InputError(source, `${where} NAXIS${i}`, `is missing although NAXIS = ${naxis}`);
    if (n < 0 || !Number.isSafeInteger(n)) throw new InputError(source, `${where} NAXIS${i}`, `must be a non-negative integer, got ${n}`);
    axes.push(n);
    count *= n;
  }
  // Random groups (NAXIS1 = 0 with GROUPS = T) count without the first axis.
  const groups = index === 0 && naxis > 0 && axes[0] === 0 && headerLogical(header, 'GROUPS', source, where) === true;
  if (groups) count = axes.slice(1).reduce((a, b) => a * b, 1);
  const pcount = headerInteger(header, 'PCOUNT', source, where) ?? 0;
  const gcount = headerInteger(header, 'GCOUNT', source, where) ?? 1;
  if (pcount < 0 || !Number.isSafeInteger(pcount)) throw new InputError(source, `${where} PCOUNT`, `must be a non-negative integer, got ${pcount}`);
  if (gcount < 0 || !Number.isSafeInteger(gcount)) throw new InputError(source, `${where} GCOUNT`, `must be a non-negative integer, got ${gcount}`);
  const dataStart = start + header.byteLength;
  // Products are compared as doubles: anything above the bytes present is refused, so a huge
  // (even inexact) product never reaches an allocation.
  const dataBytes = (Math.abs(bitpix) / 8) * gcount * (pcount + count);
  const present = bytes.length - dataStart;
  const padded = Math.ceil(dataBytes / BLOCK_LENGTH) * BLOCK_LENGTH;
  if (dataBytes <= present && padded > present) {
    // The standard requires whole 2880-byte blocks (s.3.1): missing fill means a cut file.
    throw new InputError(source, where, `file is truncated: the data end at byte ${dataStart + present} before the fill to a whole 2880-byte block`);
  }
  if (!(dataBytes <= present)) {
    throw new InputError(source, where,
      `file is truncated or the header is wrong: BITPIX ${bitpix}, NAXIS ${[naxis, ...axes].join(' x ')} claim ${dataBytes} data bytes but only ${present} are present`);
  }
  if (options.verifyChecksums !== false) verifyChecksums(bytes, start, header, dataStart, dataBytes, source, where);
  return {
    index, kind, header, bitpix, axes, pcount, gcount, dataStart, dataBytes,
    ...(extname ? { name: extname } : {}),
  };
}

/**
 * Lists the HDUs of a FITS file. Throws InputError naming `source`, the HDU and the problem.
 * Bytes after the last complete HDU that are not a header (e.g. zero padding) are ignored.
 */
export function listHdus(bytes: Uint8Array, source: string, options: ListOptions = {}): Hdu[] {
  if (bytes.length < BLOCK_LENGTH) {
    throw new InputError(source, '(file)', `is ${bytes.length} bytes, shorter than one 2880-byte FITS block: not a FITS file or truncated`);
  }
  const hdus: Hdu[] = [];
  let pos = 0;
  while (pos < bytes.length) {
    if (hdus.length > 0) {
      // Another extension starts with XTENSION; blank or zero fill after the last HDU is ignored.
      const head = String.fromCharCode(...bytes.subarray(pos, pos + 8));
      if (head !== 'XTENSION') {
        if (bytes.subarray(pos, pos + BLOCK_LENGTH).every((b) => b === 0 || b === 32)) break;
        throw new InputError(source, hduLabel(hdus.length), `bytes at ${pos} after the previous HDU are not an extension header (no XTENSION)`);
      }
    }
    const hdu = readHdu(bytes, pos, hdus.length, source, options);
    hdus.push(hdu);
    const padded = Math.ceil(hdu.dataBytes / BLOCK_LENGTH) * BLOCK_LENGTH;
    pos = hdu.dataStart + padded;
  }
  return hdus;
}
