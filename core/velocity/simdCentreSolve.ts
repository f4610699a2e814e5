// The affine fit's per-centre solve (solveCentre in core/velocity/affineWindowFit.ts) as a
// WebAssembly SIMD kernel: two centres per f64x2 (one per lane), the scaled normal matrix held in
// locals, its Cholesky factor, the determinacy check of each wanted parameter and the two triangular
// solves written out for the fit's column count. Every lane does the TypeScript's operations in its
// order (the same additions of zero, the same divisions and square roots, no fused multiply-add), so
// a centre the TypeScript solves gets the same parameters bit for bit. Where the TypeScript stops
// early (a failed check), the lane goes on with meaningless values and is flagged: its values are
// never used. The kernel shares the windowed-sum arena's memory (core/velocity/simdWindowedSum.ts).

import { F64, FunctionCode, I32, V128, moduleBytes } from '../wasmBinary.js';
import type { WindowedSumArena } from './simdWindowedSum.js';

/** The fit's fixed shape: n columns, the wanted ones, the constant added to each unit diagonal entry. */
export interface CentreSolveShape {
  readonly n: number;
  readonly wanted: readonly number[];
  /** RIDGE + ridge[p] per column, as the TypeScript adds it. */
  readonly diagonalAdd: readonly number[];
  /** Least share of the raw diagonal that must remain after the noise correction. */
  readonly minSignalShare: number;
}

/**
 * solve(sums, countBytes, raw, outs, flags, minPivot, count): for centres k < count, entry e of
 * centre k at sums + e countBytes + 8k (upper triangle of M by columns, then b), the raw diagonal
 * (p) at raw + p countBytes + 8k when raw is not 0; wanted parameter w to outs + w countBytes + 8k,
 * and flags (8 bytes per centre) all ones where the window is ill-conditioned, else zero.
 */
function solveFunction(shape: CentreSolveShape): FunctionCode {
  const { n, wanted, diagonalAdd, minSignalShare } = shape;
  const f = new FunctionCode([I32, I32, I32, I32, I32, F64, I32]);
  const SUMS = 0, CB = 1, RAW = 2, OUTS = 3, FLAGS = 4, MINPIVOT = 5, COUNT = 6;
  const o = f.local(I32), end = f.local(I32);
  const v = () => f.local(V128);
  const fail = v(), minPivot = v(), share = v(), one = v(), zero = v(), s = v(), inv = v();
  const scale = Array.from({ length: n }, v), rhs = Array.from({ length: n }, v), unit = Array.from({ length: n }, v);
  const m = Array.from({ length: n }, (_, i) => Array.from({ length: i + 1 }, v)); // lower triangle m[i][j], j <= i
  const entry = (p: number, q: number) => (q === n ? (n * (n + 1)) / 2 + p : (q * (q + 1)) / 2 + p);
  const load = (base: number, index: number) => {
    f.get(base).get(CB).i32(index).i32Mul().i32Add().get(o).i32Add().v128Load();
  };
  const failIfNot = (test: () => void) => { f.get(fail); test(); f.v128Not(); f.v128Or(); f.set(fail); };
  const splat = (into: number, value: number) => { f.f64Const(value).f64x2Splat().set(into); };
  f.get(MINPIVOT).f64x2Splat().set(minPivot);
  splat(share, minSignalShare); splat(one, 1); splat(zero, 0);
  f.get(COUNT).i32(3).i32Shl().set(end);
  f.forRange(o, () => f.i32(0), () => f.get(end), () => f.i32(16), () => {
    splat(fail, 0);
    // Scales: 1 / sqrt(d) of each diagonal entry, d > 0 and (noise-corrected) d >= share * raw d.
    for (let p = 0; p < n; p++) {
      load(SUMS, entry(p, p)); f.set(s);
      failIfNot(() => { f.get(s).get(zero); f.f64x2Gt(); });
      f.get(RAW).ifElse(() => failIfNot(() => { f.get(s).get(share); load(RAW, p); f.f64x2Mul(); f.f64x2Ge(); }));
      f.get(one).get(s); f.f64x2Sqrt(); f.f64x2Div(); f.set(scale[p]);
    }
    // The scaled matrix (lower triangle) with the diagonal additions, and the scaled right-hand side.
    for (let q = 0; q < n; q++) for (let p = 0; p <= q; p++) {
      load(SUMS, entry(p, q)); f.get(scale[p]).f64x2Mul().get(scale[q]).f64x2Mul();
      f.f64Const(p === q ? diagonalAdd[p] : 0).f64x2Splat().f64x2Add().set(m[q][p]);
    }
    for (let q = 0; q < n; q++) { load(SUMS, entry(q, n)); f.f64x2Neg().get(scale[q]).f64x2Mul().set(rhs[q]); }
    // Cholesky factor in place.
    for (let j = 0; j < n; j++) {
      f.get(m[j][j]).set(s);
      for (let k = 0; k < j; k++) f.get(s).get(m[j][k]).get(m[j][k]).f64x2Mul().f64x2Sub().set(s);
      failIfNot(() => { f.get(s).get(zero); f.f64x2Gt(); });
      f.get(s); f.f64x2Sqrt(); f.set(m[j][j]);
      for (let i = j + 1; i < n; i++) {
        f.get(m[i][j]).set(s);
        for (let k = 0; k < j; k++) f.get(s).get(m[i][k]).get(m[j][k]).f64x2Mul().f64x2Sub().set(s);
        f.get(s).get(m[j][j]); f.f64x2Div(); f.set(m[i][j]);
      }
    }
    // Each wanted parameter determined: 1 / |L^-1 e_start|^2 >= minPivot.
    for (const start of wanted) {
      for (let i = start; i < n; i++) {
        f.get(i === start ? one : zero).set(s);
        for (let k = start; k < i; k++) f.get(s).get(m[i][k]).get(unit[k]).f64x2Mul().f64x2Sub().set(s);
        f.get(s).get(m[i][i]); f.f64x2Div(); f.set(unit[i]);
      }
      f.get(zero).set(inv);
      for (let k = start; k < n; k++) f.get(inv).get(unit[k]).get(unit[k]).f64x2Mul().f64x2Add().set(inv);
      failIfNot(() => { f.get(one).get(inv); f.f64x2Div(); f.get(minPivot); f.f64x2Ge(); });
    }
    // L y = b, then L^T x = y.
    for (let i = 0; i < n; i++) {
      f.get(rhs[i]).set(s);
      for (let k = 0; k < i; k++) f.get(s).get(m[i][k]).get(rhs[k]).f64x2Mul().f64x2Sub().set(s);
      f.get(s).get(m[i][i]); f.f64x2Div(); f.set(rhs[i]);
    }
    for (let i = n - 1; i >= 0; i--) {
      f.get(rhs[i]).set(s);
      for (let k = i + 1; k < n; k++) f.get(s).get(m[k][i]).get(rhs[k]).f64x2Mul().f64x2Sub().set(s);
      f.get(s).get(m[i][i]); f.f64x2Div(); f.set(rhs[i]);
    }
    // Two centres, or the last one alone (lane 1 not stored).
    const store = (address: () => void, value: () => void) => {
      f.get(o).i32(8).i32Add().get(end).i32LtU().ifElse(() => { address(); value(); f.v128Store(); }, () => { address(); value(); f.v128Store64Lane(0); });
    };
    wanted.forEach((p, w) => store(() => { f.get(OUTS).get(CB).i32(w).i32Mul().i32Add().get(o).i32Add(); }, () => { f.get(rhs[p]).get(scale[p]).f64x2Mul(); }));
    store(() => { f.get(FLAGS).get(o).i32Add(); }, () => { f.get(fail); });
  });
  return f;
}

/** The module of one fit shape (validated before use). */
export function centreSolveModule(shape: CentreSolveShape): Uint8Array {
  return moduleBytes([{ name: 'solve', code: solveFunction(shape) }]);
}

/**
 * The kernel for `shape` bound to `arena`'s memory (made once per shape and arena); undefined where
 * the module cannot be had. solve(...) returns false, doing nothing, for arrays outside the memory.
 */
export function centreSolver(arena: WindowedSumArena, shape: CentreSolveShape): CentreSolver | undefined {
  const key = `solve ${shape.n} ${shape.wanted.join(',')} ${shape.diagonalAdd.join(',')} ${shape.minSignalShare}`;
  const exports = arena.instantiate(key, () => centreSolveModule(shape));
  if (!exports) return undefined;
  const solve = exports.solve as (...args: number[]) => void;
  return {
    solve(sums, count, raw, outs, flags, minPivot) {
      const entries = (shape.n * (shape.n + 1)) / 2 + shape.n;
      if (!arena.holds(sums, outs, flags, ...(raw ? [raw] : [])) || sums.length < entries * count
        || outs.length < shape.wanted.length * count || flags.length < 2 * count || (raw && raw.length < shape.n * count)) return false;
      solve(sums.byteOffset, 8 * count, raw ? raw.byteOffset : 0, outs.byteOffset, flags.byteOffset, minPivot, count);
      return true;
    },
  };
}

export interface CentreSolver {
  /**
   * Solves `count` centres: sums entry-major (entry e of centre k at e count + k), raw (the
   * diagonal before the noise correction, p count + k) or undefined, wanted parameter w of centre
   * k to outs[w count + k], flags[2k] non-zero where ill-conditioned. False, doing nothing, when
   * the arrays are not in the arena's memory or too short.
   */
  solve(sums: Float64Array, count: number, raw: Float64Array | undefined, outs: Float64Array, flags: Int32Array, minPivot: number): boolean;
}
