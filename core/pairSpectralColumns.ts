// The spectral loop of a box pair sum (core/boxPairSum.ts) as a WebAssembly SIMD kernel: for each
// column of one block of half-spectrum columns, the sum over its rows ky of
//
//   Re[ KX (conj(FYb) Ba - conj(Bb) FYa) - KY (conj(FXb) Ba - conj(Bb) FXa) ],
//
// two columns at a time (one per lane: the columns of a block are adjacent in memory). Each lane
// does the operations of the TypeScript loop in its order (no fused multiply-add in WebAssembly),
// so a column's sum is the same bit for bit; the caller weights and adds the columns in order.
// Bound to the memory of the pair grids' arena (SharedStretch.instantiate), where the kernel
// windows' blocks and the footpoints' spectra lie.

import { FunctionCode, I32, V128, moduleBytes } from './wasmBinary.js';

/** The key the module is bound to a memory under. */
export const PAIR_COLUMNS_KEY = 'pair spectral columns';

/**
 * pairColumns(kxr, kxi, kyr, kyi, bar, bai, xar, xai, yar, yai, bbr, bbi, xbr, xbi, ybr, ybi,
 * columnPairs, rows, blockBytes, out): byte addresses of the kernel windows' block (row ky at ky
 * blockBytes) and of the two footpoints' spectra at the same block (a: Bn, Fx, Fy re/im; b: the
 * same); out[c] gets the sum of column c for c < 2 columnPairs.
 */
function pairColumnsFunction(): FunctionCode {
  const f = new FunctionCode(Array.from({ length: 20 }, () => I32));
  const KXR = 0, KXI = 1, KYR = 2, KYI = 3, BAR = 4, BAI = 5, XAR = 6, XAI = 7, YAR = 8, YAI = 9;
  const BBR = 10, BBI = 11, XBR = 12, XBI = 13, YBR = 14, YBI = 15, PAIRS = 16, ROWS = 17, STEP = 18, OUT = 19;
  const cp = f.local(I32), at = f.local(I32), end = f.local(I32);
  const acc = f.local(V128), ur = f.local(V128), ui = f.local(V128), vr = f.local(V128), vi = f.local(V128);
  const v = new Map<number, number>();
  for (const p of [KXR, KXI, KYR, KYI, BAR, BAI, XAR, XAI, YAR, YAI, BBR, BBI, XBR, XBI, YBR, YBI]) v.set(p, f.local(V128));
  const load = (p: number) => { f.get(p).get(at).i32Add().v128Load().set(v.get(p)!); };
  const mul = (p: number, q: number) => { f.get(v.get(p)!).get(v.get(q)!).f64x2Mul(); };
  // s a1 a2 + b1 b2 - (c1 c2 + d1 d2) with sign +1, or a1 a2 - b1 b2 - (c1 c2 - d1 d2) with -1.
  const pairTerm = (a: [number, number], b: [number, number], c: [number, number], d: [number, number], sign: 1 | -1) => {
    mul(...a); mul(...b); sign === 1 ? f.f64x2Add() : f.f64x2Sub();
    mul(...c); mul(...d); sign === 1 ? f.f64x2Add() : f.f64x2Sub();
    f.f64x2Sub();
  };
  f.get(ROWS).get(STEP).i32Mul().set(end);
  f.forRange(cp, () => f.i32(0), () => f.get(PAIRS).i32(16).i32Mul(), () => f.i32(16), () => {
    f.f64Const(0).f64x2Splat().set(acc);
    f.forRange(at, () => f.get(cp), () => f.get(end), () => f.get(STEP), () => {
      for (const p of v.keys()) load(p);
      // u = conj(FYb) Ba - conj(Bb) FYa, v = conj(FXb) Ba - conj(Bb) FXa (boxPairSum.ts, term for term).
      pairTerm([YBR, BAR], [YBI, BAI], [BBR, YAR], [BBI, YAI], 1); f.set(ur);
      pairTerm([YBR, BAI], [YBI, BAR], [BBR, YAI], [BBI, YAR], -1); f.set(ui);
      pairTerm([XBR, BAR], [XBI, BAI], [BBR, XAR], [BBI, XAI], 1); f.set(vr);
      pairTerm([XBR, BAI], [XBI, BAR], [BBR, XAI], [BBI, XAR], -1); f.set(vi);
      // acc += kxr ur - kxi ui - (kyr vr - kyi vi)
      f.get(acc);
      f.get(v.get(KXR)!).get(ur).f64x2Mul().get(v.get(KXI)!).get(ui).f64x2Mul().f64x2Sub();
      f.get(v.get(KYR)!).get(vr).f64x2Mul().get(v.get(KYI)!).get(vi).f64x2Mul().f64x2Sub();
      f.f64x2Sub().f64x2Add().set(acc);
    });
    f.get(OUT).get(cp).i32Add().get(acc).v128Store();
  });
  return f;
}

/** The module's bytes (validated where it is instantiated). */
export function pairColumnsModule(): Uint8Array {
  return moduleBytes([{ name: 'pairColumns', code: pairColumnsFunction() }]);
}

export type PairColumnsKernel = (...addresses: number[]) => void;
