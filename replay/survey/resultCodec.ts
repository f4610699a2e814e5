// Task results as JSON that comes back exactly as it went: NaN and the infinities (which JSON
// turns into null) and typed arrays (which it turns into objects of indices) are written as tagged
// objects, {"$number": "NaN"} and {"$typed": "Float64Array", "values": [...]}, and revived by
// decodeResult. Every finite double round-trips exactly (JSON writes the shortest exact form). Pure.

const TYPED = {
  Float64Array, Float32Array, Int32Array, Uint32Array, Int16Array, Uint16Array, Int8Array, Uint8Array, Uint8ClampedArray,
} as const;
type TypedName = keyof typeof TYPED;

function replacer(this: unknown, _key: string, v: unknown): unknown {
  if (typeof v === 'number' && !Number.isFinite(v)) return { $number: String(v) };
  if (ArrayBuffer.isView(v) && !(v instanceof DataView)) {
    const name = v.constructor.name as TypedName;
    if (TYPED[name]) return { $typed: name, values: Array.from(v as unknown as ArrayLike<number>) };
  }
  return v;
}

function reviver(_key: string, v: unknown): unknown {
  if (v !== null && typeof v === 'object' && !Array.isArray(v)) {
    const o = v as Record<string, unknown>;
    if (typeof o.$number === 'string' && Object.keys(o).length === 1) return Number(o.$number);
    if (typeof o.$typed === 'string' && Array.isArray(o.values) && TYPED[o.$typed as TypedName]) return new TYPED[o.$typed as TypedName](o.values as number[]);
  }
  return v;
}

export function encodeResult(value: unknown): string {
  return JSON.stringify(value, replacer);
}

export function decodeResult(text: string): unknown {
  return JSON.parse(text, reviver);
}
