// The braid state as text and back, so that a monitor can store it beside each frame (as it stores
// the accumulation state) and resume exactly where it stopped: the exact Burau and Magnus integers
// (bigint) travel as decimal strings, the scaled complex products and windings as numbers (JSON
// numbers give doubles back bit for bit). A restored state folds on to the same reports as the
// uninterrupted run (test/core/braidTracker.test.ts).

import { InputError } from '../inputError.js';
import type { BraidState } from './braidTracker.js';

const BIG = '$bigint';
const F64 = '$float64';

/** The state as JSON text. */
export function braidMemory(state: BraidState): string {
  return JSON.stringify(state, (_key, v: unknown) => {
    if (typeof v === 'bigint') return { [BIG]: v.toString() };
    if (v instanceof Float64Array) return { [F64]: Array.from(v) };
    return v;
  });
}

/** The state from `braidMemory` text; `source` names where it came from in errors. */
export function restoreBraidState(text: string, source = 'braid memory'): BraidState {
  let parsed: unknown;
  try {
    parsed = JSON.parse(text, (_key, v: unknown) => {
      if (v !== null && typeof v === 'object' && !Array.isArray(v)) {
        const o = v as Record<string, unknown>;
        if (typeof o[BIG] === 'string' && Object.keys(o).length === 1) return BigInt(o[BIG] as string);
        if (Array.isArray(o[F64]) && Object.keys(o).length === 1) return Float64Array.from(o[F64] as number[]);
      }
      return v;
    });
  } catch (e) {
    throw new InputError(source, '(text)', `is not a stored braid state: ${(e as Error).message}`);
  }
  const s = parsed as Partial<BraidState> | null;
  if (!s || typeof s !== 'object' || !('segment' in s) || !Array.isArray(s.recent) || typeof s.closed?.count !== 'number') {
    throw new InputError(source, '(text)', 'is not a stored braid state: segment, recent or closed missing');
  }
  return s as BraidState;
}
