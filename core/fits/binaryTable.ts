// Just enough of the binary table extension (FITS Standard 4.0, section 7.3) to read tile-
// compressed images: column layout from TFORMn/TTYPEn, scalar cells, and variable-length array
// descriptors (P: two int32, Q: two int64) pointing into the heap, all bounds-checked.

import { InputError } from '../inputError.js';
import { headerInteger, headerString, requiredInteger } from './header.js';
import type { Hdu } from './hduList.js';
import { hduLabel } from './hduList.js';

export interface TableColumn {
  readonly name: string;
  /** Type code: L X B I J K A E D C M P Q. */
  readonly type: string;
  readonly repeat: number;
  /** For P/Q descriptors: the element type of the heap array. */
  readonly arrayType?: string;
  /** Byte offset within a row. */
  readonly offset: number;
}

export interface BinaryTable {
  readonly rowBytes: number;
  readonly rows: number;
  readonly columns: readonly TableColumn[];
  /** Offset of row 0 in the file. */
  readonly start: number;
  /** Offset of the heap in the file and its size in bytes. */
  readonly heapStart: number;
  readonly heapBytes: number;
}

const WIDTH: Record<string, number> = { L: 1, B: 1, I: 2, J: 4, K: 8, A: 1, E: 4, D: 8, C: 8, M: 16, P: 8, Q: 16 };

/** Element size in bytes of a heap array type. */
export function elementBytes(type: string): number {
  return WIDTH[type] ?? 0;
}

export function readBinaryTable(bytes: Uint8Array, hdu: Hdu, source: string): BinaryTable {
  const where = hduLabel(hdu.index, hdu.name);
  const h = hdu.header;
  if (hdu.bitpix !== 8 || hdu.axes.length !== 2) throw new InputError(source, where, 'binary table must have BITPIX 8 and NAXIS 2');
  const [rowBytes, rows] = hdu.axes;
  const tfields = requiredInteger(h, 'TFIELDS', source, where);
  if (tfields < 0 || tfields > 999) throw new InputError(source, `${where} TFIELDS`, `must be 0..999, got ${tfields}`);
  const columns: TableColumn[] = [];
  let offset = 0;
  for (let i = 1; i <= tfields; i++) {
    const tform = headerString(h, `TFORM${i}`, source, where);
    if (tform === undefined) throw new InputError(source, `${where} TFORM${i}`, `is missing although TFIELDS = ${tfields}`);
    const m = /^\s*(\d*)([LXBIJKAEDCMPQ])(.*)$/.exec(tform.toUpperCase());
    if (!m) throw new InputError(source, `${where} TFORM${i}`, `'${tform}' is not a binary table format`);
    const repeat = m[1] === '' ? 1 : Number(m[1]);
    const type = m[2];
    let arrayType: string | undefined;
    if (type === 'P' || type === 'Q') {
      const a = /^([LXBIJKAEDCM])/.exec(m[3]);
      if (!a) throw new InputError(source, `${where} TFORM${i}`, `'${tform}' has no array element type`);
      arrayType = a[1];
    }
    const width = type === 'X' ? Math.ceil(repeat / 8) : WIDTH[type] * repeat;
    const name = (headerString(h, `TTYPE${i}`, source, where) ?? '').trim().toUpperCase();
    columns.push({ name, type, repeat, offset, ...(arrayType && { arrayType }) });
    offset += width;
  }
  if (offset !== rowBytes) throw new InputError(source, `${where} NAXIS1`, `is ${rowBytes} but the TFORMn columns add up to ${offset} bytes per row`);
  const theap = headerInteger(h, 'THEAP', source, where) ?? rowBytes * rows;
  const heapBytes = hdu.pcount - (theap - rowBytes * rows);
  if (theap < rowBytes * rows || heapBytes < 0) throw new InputError(source, `${where} THEAP`, `${theap} is outside the data area`);
  return { rowBytes, rows, columns, start: hdu.dataStart, heapStart: hdu.dataStart + theap, heapBytes };
}

export function findColumn(t: BinaryTable, name: string): TableColumn | undefined {
  return t.columns.find((c) => c.name === name);
}

function view(bytes: Uint8Array): DataView {
  return new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
}

/** The first element of a numeric scalar column in a row, as a number. */
export function readCell(bytes: Uint8Array, t: BinaryTable, c: TableColumn, row: number): number {
  const dv = view(bytes);
  const at = t.start + row * t.rowBytes + c.offset;
  switch (c.type) {
    case 'B': return dv.getUint8(at);
    case 'I': return dv.getInt16(at);
    case 'J': return dv.getInt32(at);
    case 'K': return Number(dv.getBigInt64(at));
    case 'E': return dv.getFloat32(at);
    case 'D': return dv.getFloat64(at);
    default: return NaN;
  }
}

/**
 * The heap bytes of a variable-length array cell, checked against the heap. Returns the bytes
 * and the element count. InputError when the descriptor points outside the heap.
 */
export function readArrayCell(bytes: Uint8Array, t: BinaryTable, c: TableColumn, row: number, source: string, where: string):
  { data: Uint8Array; count: number } {
  const dv = view(bytes);
  const at = t.start + row * t.rowBytes + c.offset;
  let count: number, offset: number;
  if (c.type === 'P') {
    count = dv.getInt32(at);
    offset = dv.getInt32(at + 4);
  } else if (c.type === 'Q') {
    count = Number(dv.getBigInt64(at));
    offset = Number(dv.getBigInt64(at + 8));
  } else {
    throw new InputError(source, `${where} ${c.name}`, `column must be a variable-length array (P or Q), got ${c.type}`);
  }
  const size = elementBytes(c.arrayType ?? 'B');
  const n = count * size;
  if (count < 0 || offset < 0 || !(offset + n <= t.heapBytes)) {
    throw new InputError(source, `${where} ${c.name} row ${row + 1}`, `array descriptor (${count} elements at heap offset ${offset}) points outside the ${t.heapBytes}-byte heap`);
  }
  const s = t.heapStart + offset;
  return { data: bytes.subarray(s, s + n), count };
}
