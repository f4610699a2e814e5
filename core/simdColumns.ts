// The column butterflies of fftColumnBlock (bit-reversed input rows) as a WebAssembly SIMD kernel:
// two adjacent columns per f64x2 lane pair, the same IEEE operations in the same order as the
// TypeScript loops, so the results are bit-identical. The kernel works on arrays inside its own
// WebAssembly.Memory: a SimdArena is that memory with the kernel instance and a bump allocator,
// an explicit object owned by whoever made it (a convolution workspace). createSimdArena returns
// undefined where WebAssembly or its SIMD instructions are missing; callers then keep plain arrays
// and the TypeScript loops.

import type { FftPlan } from './fft.js';
import { F64, FunctionCode, I32, V128, moduleBytes } from './wasmBinary.js';

/**
 * columns(re, im, n, rowBytes, columnBytes, sign, upperHalfZero, cos, sin): fftColumnBlock with
 * inputBitReversed on the first columnBytes / 8 columns (an even count) of the row-major blocks at
 * byte addresses re and im, rows rowBytes apart; cos, sin: addresses of the plan's tables.
 */
function columnsFunction(): FunctionCode {
  const f = new FunctionCode([I32, I32, I32, I32, I32, F64, I32, I32, I32]);
  const RE = 0, IM = 1, N = 2, RB = 3, CB = 4, SIGN = 5, UHZ = 6, COS = 7, SIN = 8;
  const i32 = () => f.local(I32), v = () => f.local(V128);
  const dIm = i32(), total = i32(), rowsEnd = i32(), p = i32(), x = i32(), e = i32(), j = i32(), size = i32();
  const h = i32(), s1 = i32(), s2 = i32(), dB = i32(), dC = i32(), dD = i32(), dBi = i32(), dCi = i32(), dDi = i32();
  const dStep = i32(), halfN = i32(), k3 = i32(), inHalf = i32(), rbIm = i32(), step = i32();
  const psign = v(), nsign = v();
  const w1r = v(), w1i = v(), w2r = v(), w2i = v(), w3r = v(), w3i = v();
  const ar = v(), ai = v(), xr = v(), xi = v(), yr = v(), yi = v(), zr = v(), zi = v();
  const br = v(), bi = v(), cr = v(), ci = v(), dr = v(), di = v();
  const a1r = v(), a1i = v(), b1r = v(), b1i = v(), u1r = v(), u1i = v(), vr = v(), vi = v(), u2r = v(), u2i = v();

  const addr = (base: number, delta?: number) => { f.get(base); if (delta !== undefined) f.get(delta).i32Add(); };
  const load = (into: number, base: number, delta?: number) => { addr(base, delta); f.v128Load().set(into); };
  const store = (base: number, delta: number | undefined, value: () => void) => { addr(base, delta); value(); f.v128Store(); };
  const add = (a: number, b: number) => () => { f.get(a).get(b).f64x2Add(); };
  const sub = (a: number, b: number) => () => { f.get(a).get(b).f64x2Sub(); };
  const mul = (a: number, b: number) => () => { f.get(a).get(b).f64x2Mul(); };
  const let_ = (into: number, value: () => void) => { value(); f.set(into); };
  // wr*xr - wi*xi and wr*xi + wi*xr, in that order.
  const twiddle = (outR: number, outI: number, wr: number, wi: number, xr_: number, xi_: number) => {
    let_(outR, () => { mul(wr, xr_)(); mul(wi, xi_)(); f.f64x2Sub(); });
    let_(outI, () => { mul(wr, xi_)(); mul(wi, xr_)(); f.f64x2Add(); });
  };
  const cosAt = (index: () => void) => { f.get(COS); index(); f.i32(3).i32Shl().i32Add().f64Load(); };
  const sinAt = (index: () => void) => { f.get(SIN); index(); f.i32(3).i32Shl().i32Add().f64Load(); };
  const splat = (into: number, value: () => void) => { value(); f.f64x2Splat().set(into); };
  /** for (x = from; x < from + columnBytes; x += 16) body */
  const columnsOf = (from: () => void, body: () => void) => {
    from(); f.get(CB).i32Add().set(e);
    f.forRange(x, from, () => f.get(e), () => f.i32(16), body);
  };
  /** for (p = first; p < rowsEnd; p += stride) body */
  const rowsFrom = (first: () => void, stride: () => void, body: () => void) =>
    f.forRange(p, first, () => f.get(rowsEnd), stride, body);

  f.get(N).i32(2).i32LtU().ifElse(() => f.ret());
  f.get(IM).get(RE).i32Sub().set(dIm);
  f.get(N).get(RB).i32Mul().set(total);
  f.get(RE).get(total).i32Add().set(rowsEnd);
  f.get(RB).get(dIm).i32Add().set(rbIm);
  splat(psign, () => f.get(SIGN));
  splat(nsign, () => f.get(SIGN).f64Neg());

  // Size 2: unit twiddles; with the upper half zero the partner row is a copy.
  f.get(UHZ).ifElse(() => {
    rowsFrom(() => f.get(RE), () => f.get(RB).i32(1).i32Shl(), () => columnsOf(() => f.get(p), () => {
      store(x, RB, () => { addr(x); f.v128Load(); });
      store(x, rbIm, () => { addr(x, dIm); f.v128Load(); });
    }));
  }, () => {
    rowsFrom(() => f.get(RE), () => f.get(RB).i32(1).i32Shl(), () => columnsOf(() => f.get(p), () => {
      load(xr, x, RB); load(xi, x, rbIm); load(ar, x); load(ai, x, dIm);
      store(x, undefined, add(ar, xr)); store(x, dIm, add(ai, xi));
      store(x, RB, sub(ar, xr)); store(x, rbIm, sub(ai, xi));
    }));
  });

  // An odd count of stages after the first: one radix-2 stage of size 4.
  f.i32(4).set(size);
  f.get(N).i32Ctz().i32(1).i32Sub().i32(1).i32And().ifElse(() => {
    f.get(N).i32(2).i32ShrU().set(step);
    f.get(RB).i32(1).i32Shl().set(dB);
    f.get(dB).get(dIm).i32Add().set(dBi);
    f.forRange(j, () => f.i32(0), () => f.i32(2), () => f.i32(1), () => {
      splat(w1r, () => cosAt(() => f.get(j).get(step).i32Mul()));
      splat(w1i, () => { f.get(SIGN); sinAt(() => f.get(j).get(step).i32Mul()); f.f64Mul(); });
      rowsFrom(() => f.get(RE).get(j).get(RB).i32Mul().i32Add(), () => f.get(RB).i32(2).i32Shl(), () => columnsOf(() => f.get(p), () => {
        load(xr, x, dB); load(xi, x, dBi);
        twiddle(br, bi, w1r, w1i, xr, xi);
        load(ar, x); load(ai, x, dIm);
        store(x, undefined, add(ar, br)); store(x, dIm, add(ai, bi));
        store(x, dB, sub(ar, br)); store(x, dBi, sub(ai, bi));
      }));
    });
    f.i32(8).set(size);
  });

  // Pairs of stages (sizes s and 2s) as radix-4 butterflies on rows a, b = a + s/2, c = a + s, d = c + s/2.
  const butterfly4 = () => {
    let_(a1r, add(ar, br)); let_(a1i, add(ai, bi)); let_(b1r, sub(ar, br)); let_(b1i, sub(ai, bi));
    let_(u1r, add(cr, dr)); let_(u1i, add(ci, di)); let_(vr, sub(cr, dr)); let_(vi, sub(ci, di));
    let_(u2r, mul(nsign, vi)); let_(u2i, mul(psign, vr));
    store(x, undefined, add(a1r, u1r)); store(x, dIm, add(a1i, u1i));
    store(x, dC, sub(a1r, u1r)); store(x, dCi, sub(a1i, u1i));
    store(x, dB, add(b1r, u2r)); store(x, dBi, add(b1i, u2i));
    store(x, dD, sub(b1r, u2r)); store(x, dDi, sub(b1i, u2i));
  };
  f.get(N).i32(1).i32ShrU().set(halfN);
  f.block(() => f.loop(() => {
    f.get(size).i32(1).i32Shl().get(N).i32GtU().brIf(1);
    f.get(size).i32(1).i32ShrU().set(h);
    f.get(N).get(size).i32(1).i32Shl().i32DivU().set(s2);
    f.get(s2).i32(1).i32Shl().set(s1);
    f.get(h).get(RB).i32Mul().set(dB);
    f.get(size).get(RB).i32Mul().set(dC);
    f.get(dC).get(dB).i32Add().set(dD);
    f.get(dB).get(dIm).i32Add().set(dBi);
    f.get(dC).get(dIm).i32Add().set(dCi);
    f.get(dD).get(dIm).i32Add().set(dDi);
    f.get(dC).i32(1).i32Shl().set(dStep);
    rowsFrom(() => f.get(RE), () => f.get(dStep), () => {
      // j = 0: every twiddle is 1.
      columnsOf(() => f.get(p), () => {
        load(ar, x); load(ai, x, dIm); load(br, x, dB); load(bi, x, dBi);
        load(cr, x, dC); load(ci, x, dCi); load(dr, x, dD); load(di, x, dDi);
        butterfly4();
      });
      f.forRange(j, () => f.i32(1), () => f.get(h), () => f.i32(1), () => {
        splat(w1r, () => cosAt(() => f.get(j).get(s1).i32Mul()));
        splat(w1i, () => { f.get(SIGN); sinAt(() => f.get(j).get(s1).i32Mul()); f.f64Mul(); });
        splat(w2r, () => cosAt(() => f.get(j).get(s2).i32Mul()));
        splat(w2i, () => { f.get(SIGN); sinAt(() => f.get(j).get(s2).i32Mul()); f.f64Mul(); });
        // W^(3j) beyond the table's half turn: cos, sin of (k - n/2) with the sign flipped.
        f.get(j).i32(3).i32Mul().get(s2).i32Mul().set(k3);
        f.get(k3).get(halfN).i32LtU().set(inHalf);
        const k = () => { f.get(k3); f.get(k3).get(halfN).i32Sub(); f.get(inHalf).select(); };
        const signed = (value: number) => { f.get(value); f.get(value).f64Neg(); f.get(inHalf).select(); };
        const t = f.local(F64);
        splat(w3r, () => { cosAt(k); f.set(t); signed(t); });
        splat(w3i, () => { f.get(SIGN); sinAt(k); f.set(t); signed(t); f.f64Mul(); });
        columnsOf(() => f.get(p).get(j).get(RB).i32Mul().i32Add(), () => {
          load(ar, x); load(ai, x, dIm);
          load(xr, x, dB); load(xi, x, dBi);
          load(yr, x, dC); load(yi, x, dCi);
          load(zr, x, dD); load(zi, x, dDi);
          twiddle(br, bi, w1r, w1i, xr, xi);
          twiddle(cr, ci, w2r, w2i, yr, yi);
          twiddle(dr, di, w3r, w3i, zr, zi);
          butterfly4();
        });
      });
    });
    f.get(size).i32(2).i32Shl().set(size);
    f.br(0);
  }));
  return f;
}

/** The kernel module's bytes (built from the code above; validated before use). */
export function simdColumnsModule(): Uint8Array {
  return moduleBytes([{ name: 'columns', code: columnsFunction() }]);
}

/** The parts of the WebAssembly API used here (core is typed without DOM or Node declarations). */
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: Record<string, unknown> };
  Memory: new (descriptor: { initial: number; maximum?: number }) => { buffer: ArrayBuffer };
}

type ColumnsKernel = (
  re: number, im: number, n: number, rowBytes: number, columnBytes: number, sign: number, upperHalfZero: number, cos: number, sin: number,
) => void;

/** A WebAssembly memory holding transform buffers, with the SIMD column kernel bound to it. */
export interface SimdArena {
  readonly buffer: ArrayBuffer;
  /** A Float64Array of `length` inside the memory (16-byte aligned); throws when the arena is full. */
  alloc(length: number): Float64Array;
  /**
   * fftColumnBlock(plan, re, im, width, 0, columns, sign, upperHalfZero, true) by the SIMD kernel;
   * returns false, doing nothing, when it cannot (arrays outside this memory, odd width, a plan
   * whose twiddles were not given at creation), and the caller runs the TypeScript loops.
   */
  columns(plan: FftPlan, re: Float64Array, im: Float64Array, width: number, columns: number, sign: -1 | 1, upperHalfZero: boolean): boolean;
}

const PAGE = 65536;
/** Bytes an array of `length` doubles takes in an arena (alloc rounds to 16). */
export function arenaBytes(length: number): number {
  return Math.ceil(length / 2) * 16;
}

/**
 * An arena of `bytes` (the sum of arenaBytes of the arrays to be allocated) plus the twiddle tables
 * of `plans`; undefined when WebAssembly SIMD is unavailable or the memory cannot be had.
 */
export function createSimdArena(bytes: number, plans: readonly FftPlan[]): SimdArena | undefined {
  const wasm = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  if (!wasm) return undefined;
  const code = simdColumnsModule();
  try {
    if (!wasm.validate(code)) return undefined;
  } catch { return undefined; }
  let tableBytes = 0;
  for (const plan of plans) tableBytes += 2 * arenaBytes(plan.cos.length);
  const pages = Math.ceil((bytes + tableBytes + 16) / PAGE);
  if (pages > 65536) return undefined;
  let memory: { buffer: ArrayBuffer };
  let kernel: ColumnsKernel;
  try {
    memory = new wasm.Memory({ initial: pages, maximum: pages });
    const instance = new wasm.Instance(new wasm.Module(code), { env: { memory } });
    kernel = instance.exports.columns as ColumnsKernel;
  } catch { return undefined; }
  const buffer = memory.buffer;
  let next = 16; // address 0 left unused
  const limit = pages * PAGE;
  const alloc = (length: number) => {
    const size = arenaBytes(length);
    if (next + size > limit) throw new RangeError(`SIMD arena full: ${length} doubles asked, ${limit - next} bytes left`);
    const a = new Float64Array(buffer, next, length);
    next += size;
    return a;
  };
  const tables = new Map<FftPlan, { cos: number; sin: number }>();
  for (const plan of plans) {
    if (tables.has(plan)) continue;
    const cos = alloc(plan.cos.length), sin = alloc(plan.sin.length);
    cos.set(plan.cos); sin.set(plan.sin);
    tables.set(plan, { cos: cos.byteOffset, sin: sin.byteOffset });
  }
  return {
    buffer,
    alloc,
    columns(plan, re, im, width, columns, sign, upperHalfZero) {
      const t = tables.get(plan);
      if (!t || re.buffer !== buffer || im.buffer !== buffer || width % 2 !== 0 || columns > width
        || re.length < plan.n * width || im.length < plan.n * width) return false;
      kernel(re.byteOffset, im.byteOffset, plan.n, width * 8, Math.ceil(columns / 2) * 16, sign, upperHalfZero ? 1 : 0, t.cos, t.sin);
      return true;
    },
  };
}
