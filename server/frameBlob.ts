// Our binary container for a frame's maps on disk: "HLCM", version, header length, a JSON header
// (grid, time, names), then the Float64 maps and the Int32 maps, 8-byte aligned, little-endian.
// The content hash of a frame covers the grid, the time and the map values, not where it came
// from, so the same frame sent twice by different routes is recognised.
import { createHash } from 'node:crypto';
import type { Frame } from '../core/frame.js';
import { FRAME_MAPS } from '../core/frame.js';
import { open } from 'node:fs/promises';
import { InputError } from '../core/inputError.js';

const MAGIC = 0x4d434c48; // "HLCM" little-endian
const VERSION = 1;

export interface FrameBlobHeader {
  readonly time: number;
  readonly nx: number;
  readonly ny: number;
  readonly dx: number;
  readonly dy: number;
  readonly float: readonly string[];
  readonly int: readonly string[];
  readonly [more: string]: unknown;
}

export interface FrameBlobContent {
  readonly header: FrameBlobHeader;
  readonly float: Record<string, Float64Array>;
  readonly int: Record<string, Int32Array>;
}

function align8(n: number): number {
  return (n + 7) & ~7;
}

export function encodeFrameBlob(header: { time: number; nx: number; ny: number; dx: number; dy: number; [more: string]: unknown }, float: Record<string, Float64Array | undefined>, int: Record<string, Int32Array | undefined> = {}): Buffer {
  const fNames = Object.keys(float).filter((k) => float[k] !== undefined);
  const iNames = Object.keys(int).filter((k) => int[k] !== undefined);
  const json = Buffer.from(JSON.stringify({ ...header, float: fNames, int: iNames }), 'utf8');
  const headStart = 12;
  const dataStart = align8(headStart + json.length);
  const n = header.nx * header.ny;
  const size = dataStart + fNames.length * n * 8 + align8(iNames.length * n * 4);
  const buf = Buffer.alloc(size);
  buf.writeUInt32LE(MAGIC, 0);
  buf.writeUInt32LE(VERSION, 4);
  buf.writeUInt32LE(json.length, 8);
  json.copy(buf, headStart);
  let off = dataStart;
  for (const name of fNames) {
    const src = float[name]!;
    const dst = new Float64Array(buf.buffer, buf.byteOffset + off, n);
    for (let i = 0; i < n; i++) { const v = src[i]; dst[i] = v === v ? v : NaN; }
    off += n * 8;
  }
  for (const name of iNames) {
    new Int32Array(buf.buffer, buf.byteOffset + off, n).set(int[name]!);
    off += n * 4;
  }
  return buf;
}

export function decodeFrameBlob(bytes: Uint8Array, source: string): FrameBlobContent {
  const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (buf.length < 12 || buf.readUInt32LE(0) !== MAGIC) throw new InputError(source, '(file)', 'is not a helicord map file');
  if (buf.readUInt32LE(4) !== VERSION) throw new InputError(source, '(file)', `has map file version ${buf.readUInt32LE(4)}, expected ${VERSION}`);
  const len = buf.readUInt32LE(8);
  const header = JSON.parse(buf.subarray(12, 12 + len).toString('utf8')) as FrameBlobHeader;
  const n = header.nx * header.ny;
  let off = align8(12 + len);
  const need = off + header.float.length * n * 8 + header.int.length * n * 4;
  if (buf.length < need) throw new InputError(source, '(file)', `is truncated: ${buf.length} bytes, expected ${need}`);
  // Copy out so the arrays are aligned and independent of the file buffer.
  const float: Record<string, Float64Array> = {};
  for (const name of header.float) {
    float[name] = new Float64Array(buf.buffer.slice(buf.byteOffset + off, buf.byteOffset + off + n * 8));
    off += n * 8;
  }
  const int: Record<string, Int32Array> = {};
  for (const name of header.int) {
    int[name] = new Int32Array(buf.buffer.slice(buf.byteOffset + off, buf.byteOffset + off + n * 4));
    off += n * 4;
  }
  return { header, float, int };
}

/** The header of a stored blob, read without its maps (a frame's provenance for its map's coordinates). */
export async function readFrameBlobHeader(path: string, source: string): Promise<FrameBlobHeader> {
  const file = await open(path, 'r');
  try {
    const head = Buffer.alloc(12);
    await file.read(head, 0, 12, 0);
    if (head.readUInt32LE(0) !== MAGIC) throw new InputError(source, '(file)', 'is not a helicord map file');
    const len = head.readUInt32LE(8);
    const json = Buffer.alloc(len);
    const { bytesRead } = await file.read(json, 0, len, 12);
    if (bytesRead < len) throw new InputError(source, '(file)', `is truncated: its header needs ${len} bytes, ${bytesRead} there`);
    return JSON.parse(json.toString('utf8')) as FrameBlobHeader;
  } finally {
    await file.close();
  }
}

/** The stored form of a frame (provenance kept in the header). */
export function encodeFrame(frame: Frame): Buffer {
  const float: Record<string, Float64Array | undefined> = {};
  for (const name of FRAME_MAPS) float[name] = frame[name];
  return encodeFrameBlob(
    { time: frame.time, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy, provenance: frame.provenance ?? {} },
    float, { labels: frame.labels },
  );
}

export function decodeFrame(bytes: Uint8Array, source: string): Frame {
  const { header, float, int } = decodeFrameBlob(bytes, source);
  return {
    time: header.time, nx: header.nx, ny: header.ny, dx: header.dx, dy: header.dy,
    bn: float.bn,
    ...(float.bx && { bx: float.bx }), ...(float.by && { by: float.by }),
    ...(float.vx && { vx: float.vx }), ...(float.vy && { vy: float.vy }), ...(float.vz && { vz: float.vz }),
    ...(int.labels && { labels: int.labels }),
    provenance: (header.provenance as Frame['provenance']) ?? {},
  };
}

/** sha256 over the time, grid and map values of a frame (not its provenance). */
export function frameHash(frame: Frame): string {
  const h = createHash('sha256');
  h.update(JSON.stringify({ time: frame.time, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy }));
  for (const name of FRAME_MAPS) {
    const m = frame[name];
    if (!m) continue;
    h.update(name);
    const copy = new Float64Array(m.length);
    for (let i = 0; i < m.length; i++) { const v = m[i]; copy[i] = v === v ? v : NaN; }
    h.update(new Uint8Array(copy.buffer));
  }
  if (frame.labels) { h.update('labels'); h.update(new Uint8Array(frame.labels.buffer, frame.labels.byteOffset, frame.labels.byteLength)); }
  return h.digest('hex');
}
