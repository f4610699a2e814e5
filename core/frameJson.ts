// Our JSON frame format: { time: ISO 8601 UTC, nx, ny, dx, dy (Mm), bn: [...], optional bx, by,
// vx, vy, vz, labels }, flat row-major arrays with x fastest; null stands for NaN (no data).

import type { Frame } from './frame.js';
import { FRAME_MAPS, frameFromMaps } from './frame.js';
import { InputError } from './inputError.js';

/** Options of the JSON reader. */
export interface JsonFrameOptions {
  /** Largest frame, nx * ny pixels; checked before any map is allocated. */
  readonly maxPixels?: number;
}

function checkLength(value: unknown[], field: string, source: string, maxPixels: number): void {
  if (value.length > maxPixels) throw new InputError(source, field, `an array of ${value.length} pixels exceeds the limit of ${maxPixels} pixels`);
}

function toMap(value: unknown, field: string, source: string, maxPixels: number): Float64Array {
  if (!Array.isArray(value)) throw new InputError(source, field, 'must be an array of numbers (null for no data)');
  checkLength(value, field, source, maxPixels);
  const out = new Float64Array(value.length);
  for (let i = 0; i < value.length; i++) {
    const v = value[i];
    if (v === null) out[i] = NaN;
    else if (typeof v === 'number') out[i] = v;
    else throw new InputError(source, `${field}[${i}]`, `must be a number or null, got ${describe(v)}`);
  }
  return out;
}

function toLabels(value: unknown, source: string, maxPixels: number): Int32Array {
  if (!Array.isArray(value)) throw new InputError(source, 'labels', 'must be an array of integers');
  checkLength(value, 'labels', source, maxPixels);
  const out = new Int32Array(value.length);
  for (let i = 0; i < value.length; i++) {
    const v = value[i];
    if (typeof v !== 'number' || !Number.isInteger(v) || v < 0) {
      throw new InputError(source, `labels[${i}]`, `must be a non-negative integer, got ${describe(v)}`);
    }
    out[i] = v;
  }
  return out;
}

/** A value for an error message: short, whatever was sent. */
function describe(v: unknown): string {
  const text = JSON.stringify(v) ?? String(v);
  return text.length > 60 ? `${text.slice(0, 57)}...` : text;
}

/** Parses an ISO 8601 time that names its zone (Z or an offset); returns UTC ms. */
export function parseIsoTime(text: unknown, field: string, source: string): number {
  if (typeof text !== 'string') throw new InputError(source, field, 'must be an ISO 8601 time string');
  const shown = text.length > 40 ? `${text.slice(0, 37)}...` : text;
  if (text.length > 64 || !/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:?\d{2})$/.test(text.trim())) {
    throw new InputError(source, field, `"${shown}" is not an ISO 8601 UTC time such as 2026-03-14T06:00:00Z`);
  }
  const t = Date.parse(text);
  if (!Number.isFinite(t)) throw new InputError(source, field, `"${shown}" is not a valid date`);
  return t;
}

/** Turns parsed JSON into a checked Frame; throws InputError naming the field otherwise. */
export function frameFromJson(json: unknown, source = 'frame.json', options: JsonFrameOptions = {}): Frame {
  const maxPixels = options.maxPixels ?? Number.POSITIVE_INFINITY;
  if (json === null || typeof json !== 'object' || Array.isArray(json)) {
    throw new InputError(source, '(top level)', 'is not a frame: expected an object with time, nx, ny, dx, dy and bn');
  }
  const o = json as Record<string, unknown>;
  for (const key of ['time', 'nx', 'ny', 'dx', 'dy', 'bn']) {
    if (!(key in o)) throw new InputError(source, key, 'is missing; a frame needs time, nx, ny, dx, dy and bn');
  }
  for (const key of ['nx', 'ny', 'dx', 'dy']) {
    if (typeof o[key] !== 'number') throw new InputError(source, key, `must be a number, got ${describe(o[key])}`);
  }
  const pixels = (o.nx as number) * (o.ny as number);
  if (pixels > maxPixels) throw new InputError(source, 'nx', `a frame of ${o.nx} x ${o.ny} pixels exceeds the limit of ${maxPixels} pixels`);
  const maps: Partial<Record<(typeof FRAME_MAPS)[number], Float64Array>> = {};
  for (const name of FRAME_MAPS) {
    if (o[name] !== undefined && o[name] !== null) maps[name] = toMap(o[name], name, source, maxPixels);
  }
  return frameFromMaps(
    { time: parseIsoTime(o.time, 'time', source), nx: o.nx as number, ny: o.ny as number, dx: o.dx as number, dy: o.dy as number },
    maps, source,
    o.labels !== undefined && o.labels !== null ? { labels: toLabels(o.labels, source, maxPixels) } : {},
  );
}

/**
 * Parses JSON text into a Frame; syntax errors become an InputError naming the source and the
 * position, never quoting the text (it may be a file that is not a frame at all).
 */
export function parseFrameJson(text: string, source = 'frame.json', options: JsonFrameOptions = {}): Frame {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    const at = /position (\d+)/.exec((e as Error).message);
    const where = at ? ` (syntax error at character ${at[1]})` : /end of JSON input/i.test((e as Error).message) ? ' (it ends too soon)' : '';
    throw new InputError(source, '(json)', `is not valid JSON${where}`);
  }
  return frameFromJson(json, source, options);
}

function mapToJson(map: ArrayLike<number>): (number | null)[] {
  const out: (number | null)[] = new Array(map.length);
  for (let i = 0; i < map.length; i++) out[i] = Number.isFinite(map[i]) ? map[i] : null;
  return out;
}

/** The JSON form of a frame (NaN written as null). */
export function frameToJson(frame: Frame): Record<string, unknown> {
  const o: Record<string, unknown> = {
    time: new Date(frame.time).toISOString(), nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy,
  };
  for (const name of FRAME_MAPS) {
    const m = frame[name];
    if (m) o[name] = mapToJson(m);
  }
  if (frame.labels) o.labels = Array.from(frame.labels);
  return o;
}
