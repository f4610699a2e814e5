// The affine fit's windowed sums (core/velocity/windowedSum.ts) as WebAssembly SIMD kernels: the
// fused row passes at the pixels the column windows read, the fused column passes at the centres to
// solve and the moment-to-entry accumulation. f64x2 lanes hold two adjacent pixels of a row, and
// each lane does the same IEEE operations in the same order as the TypeScript loops (no fused
// multiply-add in WebAssembly), so the sums are bit-identical. The kernels work inside one
// WebAssembly.Memory: a WindowedSumArena is that memory (its own, or a stretch of a flux kernel's
// that the thread's workspaces share: core/wasmBinary.ts SharedStretch) with the instance and a
// bump allocator, owned by the caller (an AffineFitWorkspace, kept from one fit to the next: on
// this machine fresh memory costs more to touch than the kernels save). Only interior pixels go
// through the kernels (the symmetric-tap form); the few at the edges, where a window is cut, keep
// the TypeScript loops.
// createWindowedSumArena returns undefined where WebAssembly or its SIMD instructions are missing:
// the fit then runs the TypeScript loops alone.

import type { SharedStretch } from '../wasmBinary.js';
import { F64, FunctionCode, I32, V128, instantiateOnMemory, keyedInstances, moduleBytes } from '../wasmBinary.js';
import type { ValueType } from '../wasmBinary.js';

/** +1 for taps even about the centre (even powers of the offset), -1 for odd ones. */
export type Parity = 1 | -1;

/**
 * The fused pass over runs of pixels, for one to three tap sets of the given parities:
 * 'rows': runs (start pixel, length) of pixels whose row windows lie inside the grid;
 *   out_s[i] = t_s[0] c + Sum_{d=1..r} t_s[d] (in[i + d] +- in[i - d])
 * 'columns': runs (start pixel, start centre, length) of centres whose column windows lie inside;
 *   out_s[k] = t_s[0] c + Sum_{e=1..r} t_s[e] (in[i + e nx] +- in[i - e nx])
 * Parameters: input, runs, runCount, stepBytes (8 for rows, 8 nx for columns), r, then per set its
 * splatted taps (16 bytes per tap, from the centre one) and its output.
 */
function passFunction(kind: 'rows' | 'columns', parities: readonly Parity[]): FunctionCode {
  const sets = parities.length;
  const f = new FunctionCode([I32, I32, I32, I32, I32, ...parities.flatMap((): ValueType[] => [I32, I32])]);
  const IN = 0, RUNS = 1, COUNT = 2, STEP = 3, R = 4;
  const TAPS = (s: number) => 5 + 2 * s, OUT = (s: number) => 6 + 2 * s;
  const i32 = () => f.local(I32), v = () => f.local(V128);
  const run = i32(), runAt = i32(), pos = i32(), end = i32(), outPos = i32(), up = i32(), down = i32(), tap = i32(), d = i32();
  const c = v(), p = v(), m = v(), even = v(), odd = v();
  const acc = parities.map(() => v());
  const runBytes = kind === 'rows' ? 8 : 12;
  f.forRange(run, () => f.i32(0), () => f.get(COUNT), () => f.i32(1), () => {
    f.get(run).i32(runBytes).i32Mul().get(RUNS).i32Add().set(runAt);
    // pos: byte offset of the pixel in the input; outPos: of its output; end: past the run.
    f.get(runAt).i32Load(0).i32(3).i32Shl().set(pos);
    if (kind === 'rows') {
      f.get(pos).set(outPos);
      f.get(runAt).i32Load(4).i32(3).i32Shl().get(pos).i32Add().set(end);
    } else {
      f.get(runAt).i32Load(4).i32(3).i32Shl().set(outPos);
      f.get(runAt).i32Load(8).i32(3).i32Shl().get(pos).i32Add().set(end);
    }
    f.block(() => f.loop(() => {
      f.get(pos).get(end).i32GeU().brIf(1);
      f.get(IN).get(pos).i32Add().v128Load().set(c);
      parities.forEach((_, s) => { f.get(TAPS(s)).v128Load().get(c).f64x2Mul().set(acc[s]); });
      f.get(IN).get(pos).i32Add().tee(up).set(down);
      f.i32(16).set(tap);
      f.i32(1).set(d);
      f.block(() => f.loop(() => {
        f.get(d).get(R).i32GtU().brIf(1);
        f.get(up).get(STEP).i32Add().tee(up).v128Load().set(p);
        f.get(down).get(STEP).i32Sub().tee(down).v128Load().set(m);
        if (parities.includes(1)) f.get(p).get(m).f64x2Add().set(even);
        if (parities.includes(-1)) f.get(p).get(m).f64x2Sub().set(odd);
        parities.forEach((parity, s) => {
          f.get(acc[s]).get(TAPS(s)).get(tap).i32Add().v128Load().get(parity === 1 ? even : odd).f64x2Mul().f64x2Add().set(acc[s]);
        });
        f.get(tap).i32(16).i32Add().set(tap);
        f.get(d).i32(1).i32Add().set(d);
        f.br(0);
      }));
      // Two pixels, or the last one of an odd run alone (its partner lane is not stored).
      f.get(pos).i32(8).i32Add().get(end).i32LtU().ifElse(() => {
        parities.forEach((_, s) => { f.get(OUT(s)).get(outPos).i32Add().get(acc[s]).v128Store(); });
      }, () => {
        parities.forEach((_, s) => { f.get(OUT(s)).get(outPos).i32Add().get(acc[s]).v128Store64Lane(0); });
      });
      f.get(pos).i32(16).i32Add().set(pos);
      f.get(outPos).i32(16).i32Add().set(outPos);
      f.br(0);
    }));
  });
  return f;
}

/** axpy(target, coef, column, count): target[k] += coef * column[k]. */
function axpyFunction(): FunctionCode {
  const f = new FunctionCode([I32, F64, I32, I32]);
  const T = 0, COEF = 1, COL = 2, COUNT = 3;
  const k = f.local(I32), end = f.local(I32), pairs = f.local(I32), cv = f.local(V128);
  f.get(COEF).f64x2Splat().set(cv);
  f.get(COUNT).i32(3).i32Shl().set(end);
  f.get(COUNT).i32(1).i32ShrU().i32(4).i32Shl().set(pairs);
  f.forRange(k, () => f.i32(0), () => f.get(pairs), () => f.i32(16), () => {
    f.get(T).get(k).i32Add();
    f.get(T).get(k).i32Add().v128Load();
    f.get(cv).get(COL).get(k).i32Add().v128Load().f64x2Mul().f64x2Add().v128Store();
  });
  // A lone last value in lane 0 (the same operations; lane 1 not stored).
  f.get(pairs).get(end).i32LtU().ifElse(() => {
    f.get(T).get(pairs).i32Add();
    f.get(T).get(pairs).i32Add().v128Load64Zero();
    f.get(cv).get(COL).get(pairs).i32Add().v128Load64Zero().f64x2Mul().f64x2Add().v128Store64Lane(0);
  });
  return f;
}

/** Every parity combination of one to three tap sets, named as passName gives. */
const PARITY_SETS: readonly (readonly Parity[])[] = [1, 2, 3].flatMap((sets) =>
  Array.from({ length: 1 << sets }, (_, bits) => Array.from({ length: sets }, (_, s) => ((bits >> s) & 1 ? -1 : 1) as Parity)));

function passName(kind: 'rows' | 'columns', parities: readonly Parity[]): string {
  return `${kind}${parities.map((p) => (p === 1 ? 'e' : 'o')).join('')}`;
}

/** The kernel module's bytes (validated before use). */
export function windowedSumModule(): Uint8Array {
  return moduleBytes([
    ...PARITY_SETS.flatMap((parities) => (['rows', 'columns'] as const).map((kind) => ({ name: passName(kind, parities), code: passFunction(kind, parities) }))),
    { name: 'axpy', code: axpyFunction() },
  ]);
}

/** A WebAssembly memory holding the fit's maps, with the windowed-sum kernels bound to it. */
export interface WindowedSumArena {
  /** Its size in bytes (what windowedSumArenaBytes may add up to). */
  readonly bytes: number;
  /** The shared stretch it lies on, if it has no memory of its own. */
  readonly stretch?: SharedStretch;
  /** Frees everything allocated (the memory is kept, with what it holds: not zeroed). */
  reset(): void;
  /** A Float64Array of `length` inside the memory (16-byte aligned, 16 bytes of slack after it). */
  alloc(length: number): Float64Array;
  /** An Int32Array of `length` inside the memory. */
  allocInt32(length: number): Int32Array;
  /**
   * The fused pass of `kind` over `runCount` runs (in `runs`, made by allocInt32) by the kernel,
   * with the taps of `taps` (from splatTaps), parities `parities`, window radius r, into `outs`;
   * nx is the row length (columns step by it). False, doing nothing, for arrays outside the memory
   * or a count of sets other than 1 to 3 (every kernel below declines the same way).
   */
  pass(kind: 'rows' | 'columns', input: Float64Array, nx: number, runs: Int32Array, runCount: number,
    taps: readonly Float64Array[], parities: readonly Parity[], r: number, outs: readonly Float64Array[]): boolean;
  /**
   * target[targetAt + k] += coef * column[columnAt + k] for k < count (offsets default 0). False,
   * doing nothing, when either array lies outside the memory.
   */
  axpy(target: Float64Array, coef: number, column: Float64Array, count: number, targetAt?: number, columnAt?: number): boolean;
  /** Taps t[r..2r] of a symmetric tap set, each twice (one per lane), inside the memory. */
  splatTaps(taps: Float64Array): Float64Array;
  /** Whether every array lies in the memory. */
  holds(...arrays: (Float64Array | Int32Array)[]): boolean;
  /**
   * The exports of another module bound to this memory (made once per key, from `bytes()`);
   * undefined where it does not validate or cannot be instantiated.
   */
  instantiate(key: string, bytes: () => Uint8Array): Record<string, unknown> | undefined;
}


/** Bytes an arena needs for arrays of these lengths (doubles; Int32Arrays count as half). */
export function windowedSumArenaBytes(lengths: readonly number[]): number {
  return lengths.reduce((sum, n) => sum + Math.ceil(n / 2) * 16 + 16, 16);
}

/** The kernels' module among those bound to a memory (SharedStretch.instantiate). */
const MODULE_KEY = 'windowed sums';

/** A memory of its own of at least `bytes`, as a stretch from address 16 (0 left unused). */
function ownMemory(bytes: number): SharedStretch | undefined {
  const made = instantiateOnMemory(windowedSumModule(), bytes);
  if (!made) return undefined;
  return { buffer: made.buffer, start: 16, end: made.bytes, instantiate: keyedInstances(made, MODULE_KEY) };
}

/**
 * An arena of `bytes` (see windowedSumArenaBytes) in a memory of its own, or over `on` (a stretch
 * of a memory this thread's other workspaces share: its size is then the stretch's); undefined
 * without WebAssembly SIMD or memory.
 */
export function createWindowedSumArena(bytes: number, on?: SharedStretch): WindowedSumArena | undefined {
  const home = on ?? ownMemory(bytes);
  const exports = home?.instantiate(MODULE_KEY, windowedSumModule);
  if (!home || !exports) return undefined;
  const { buffer, instantiate, start: first, end: limit } = home;
  const passes = new Map<string, (...args: number[]) => void>();
  for (const parities of PARITY_SETS) for (const kind of ['rows', 'columns'] as const) {
    passes.set(passName(kind, parities), exports[passName(kind, parities)] as (...args: number[]) => void);
  }
  const axpy = exports.axpy as (t: number, coef: number, c: number, count: number) => void;
  let next = first;
  const reserve = (bytes: number) => {
    const size = Math.ceil(bytes / 16) * 16 + 16; // slack: a lone last lane may read one past the end
    if (next + size > limit) throw new RangeError(`windowed-sum arena full: ${bytes} bytes asked, ${limit - next} left`);
    const at = next;
    next += size;
    return at;
  };
  const inside = (...arrays: (Float64Array | Int32Array)[]) => arrays.every((a) => a.buffer === buffer);
  return {
    holds: inside,
    instantiate,
    bytes: limit - first + 16,
    ...(on && { stretch: on }),
    reset() { next = first; },
    alloc: (length) => new Float64Array(buffer, reserve(8 * length), length),
    allocInt32: (length) => new Int32Array(buffer, reserve(4 * length), length),
    splatTaps(taps) {
      const r = (taps.length - 1) >> 1;
      const out = new Float64Array(buffer, reserve(16 * (r + 1)), 2 * (r + 1));
      for (let d = 0; d <= r; d++) { out[2 * d] = taps[r + d]; out[2 * d + 1] = taps[r + d]; }
      return out;
    },
    pass(kind, input, nx, runs, runCount, taps, parities, r, outs) {
      if (!inside(input, runs, ...taps, ...outs) || taps.length !== parities.length || outs.length !== parities.length
        || parities.length < 1 || parities.length > 3) return false;
      const args = [input.byteOffset, runs.byteOffset, runCount, kind === 'rows' ? 8 : 8 * nx, r];
      for (let s = 0; s < parities.length; s++) args.push(taps[s].byteOffset, outs[s].byteOffset);
      passes.get(passName(kind, parities))!(...args);
      return true;
    },
    axpy(target, coef, column, count, targetAt = 0, columnAt = 0) {
      if (!inside(target, column)) return false;
      axpy(target.byteOffset + 8 * targetAt, coef, column.byteOffset + 8 * columnAt, count);
      return true;
    },
  };
}
