// JSON that keeps NaN and the infinities (stored states carry NaN for "no value yet").
const TAG = '$num';

export function toSafeJson(value: unknown): string {
  return JSON.stringify(value, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? { [TAG]: String(v) } : v));
}

export function fromSafeJson<T>(text: string): T {
  return JSON.parse(text, (_k, v) => (v !== null && typeof v === 'object' && TAG in v && Object.keys(v).length === 1 ? Number(v[TAG]) : v)) as T;
}
