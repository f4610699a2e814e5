// The inner loops of the batched transforms as WebAssembly SIMD kernels: the column butterflies of
// fftColumnBlock (bit-reversed input rows), the split passes of the batched real row transforms, the
// gather of a column block in convolvePadded and the helicity flux's spectral products. f64x2 lanes
// hold two adjacent columns (or two rows), and every kernel does the same IEEE operations in the same
// order as the TypeScript loops, so the results are bit-identical. The kernels work on arrays inside
// their own WebAssembly.Memory: a SimdArena is that memory with the instance and a bump allocator,
// an explicit object owned by whoever made it (a flux kernel or a convolution workspace); over()
// gives another allocator on a stretch of the same memory (rest(): what is not handed out yet).
// createSimdArena returns undefined where WebAssembly or its SIMD instructions are missing; callers
// then keep plain arrays and the TypeScript loops, which also run whenever a kernel declines.

import type { FftPlan, RealFftPlan } from './fft.js';
import type { SharedStretch } from './wasmBinary.js';
import { F64, FunctionCode, I32, V128, instantiateOnMemory, keyedInstances, moduleBytes } from './wasmBinary.js';

/**
 * columns(re, im, n, rowBytes, columnBytes, sign, upperHalfZero, cos, sin): fftColumnBlock with
 * inputBitReversed on the first columnBytes / 8 columns (an even count) of the row-major blocks at
 * byte addresses re and im, rows rowBytes apart; cos, sin: addresses of the plan's tables.
 * upperHalfZero 2: the size-2 stage's copies are made already (packRows with duplicate).
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

  // Size 2: unit twiddles; with the upper half zero the partner row is a copy (upperHalfZero 2: the
  // caller made the copies already, packRows with duplicate).
  f.get(UHZ).i32(2).i32Eq().ifElse(() => {}, () => f.get(UHZ).ifElse(() => {
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
  }));

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

/**
 * The real-transform split passes of realFftRows (out: frequencies 1..m/2 of the bw rows of a
 * block, from the transformed block to the spectra) and realInverseFftRows (in: from the spectra
 * to the block, in bit-reversed rows). Lanes are two adjacent rows (block columns); the spectra side
 * is read and written lane by lane (its rows are rowBytes apart). Frequency k of row c sits at
 * base + (k >>> shift) * strideBytes + (k & mask) * 8 + c * rowBytes, from the spectra's addresses.
 * With an odd row count the last row goes alone (lane 1 neither read from nor stored to the spectra).
 */
function realSplitFunction(direction: 'out' | 'in'): FunctionCode {
  // out: (zr, zi, rows, specRe, specIm, base, rowBytes, shift, mask, strideBytes, m, cos, sin, rev, blockRowBytes)
  // in: the same parameters; the spectra are read and the block written.
  const f = new FunctionCode([I32, I32, I32, I32, I32, I32, I32, I32, I32, I32, I32, I32, I32, I32, I32]);
  const ZR = 0, ZI = 1, BW = 2, SRE = 3, SIM = 4, BASE = 5, RB = 6, SHIFT = 7, MASK = 8, STRIDE = 9, M = 10, COS = 11, SIN = 12, REV = 13, WB = 14;
  const i32 = () => f.local(I32), v = () => f.local(V128);
  const k = i32(), h = i32(), zk = i32(), zb = i32(), fk = i32(), fb = i32(), x = i32(), o = i32(), pairEnd = i32(), dzi = i32();
  const cs = v(), sn = v(), half = v(), nhalf = v();
  const ar = v(), ai = v(), br = v(), bi = v(), er = v(), ei = v(), dr = v(), di = v(), or = v(), oi = v(), tr = v(), ti = v();
  const let_ = (into: number, value: () => void) => { value(); f.set(into); };
  const op2 = (a: number, b: number, op: 'add' | 'sub' | 'mul') => () => {
    f.get(a).get(b);
    if (op === 'add') f.f64x2Add(); else if (op === 'sub') f.f64x2Sub(); else f.f64x2Mul();
  };
  /** Address of frequency `kk` (pushed by the callback) relative to the spectra's start. */
  const frequency = (kk: () => void) => {
    kk(); f.get(SHIFT).i32ShrU().get(STRIDE).i32Mul();
    kk(); f.get(MASK).i32And().i32(3).i32Shl().i32Add().get(BASE).i32Add();
  };
  const lanes = (base: number, delta: number, tail: boolean) => {
    // two rows rowBytes apart into lanes 0 and 1 (lane 1 zero for a lone last row)
    if (!tail) { f.get(base).get(delta).i32Add().get(o).i32Add().get(RB).i32Add(); }
    f.get(base).get(delta).i32Add().get(o).i32Add().v128Load64Zero();
    if (!tail) f.v128Load64Lane(1);
  };
  const storeLanes = (base: number, delta: number, tail: boolean, value: () => void) => {
    f.get(base).get(delta).i32Add().get(o).i32Add(); value(); f.v128Store64Lane(0);
    if (!tail) { f.get(base).get(delta).i32Add().get(o).i32Add().get(RB).i32Add(); value(); f.v128Store64Lane(1); }
  };
  const blockLoad = (into: number, row: number, im: boolean) => {
    f.get(row).get(x).i32Add(); if (im) f.get(dzi).i32Add(); f.v128Load().set(into);
  };
  const blockStore = (row: number, im: boolean, value: () => void) => {
    f.get(row).get(x).i32Add(); if (im) f.get(dzi).i32Add(); value(); f.v128Store();
  };
  const body = (tail: boolean) => {
    if (direction === 'out') {
      blockLoad(ar, zk, false); blockLoad(ai, zk, true); blockLoad(br, zb, false); blockLoad(bi, zb, true);
      // er = .5 (zk_r + zb_r), ei = .5 (zk_i - zb_i), or = .5 (zk_i + zb_i), oi = -.5 (zk_r - zb_r)
      let_(er, () => { f.get(half); op2(ar, br, 'add')(); f.f64x2Mul(); });
      let_(ei, () => { f.get(half); op2(ai, bi, 'sub')(); f.f64x2Mul(); });
      let_(or, () => { f.get(half); op2(ai, bi, 'add')(); f.f64x2Mul(); });
      let_(oi, () => { f.get(nhalf); op2(ar, br, 'sub')(); f.f64x2Mul(); });
      // tr = cs or + sn oi, ti = cs oi - sn or
      let_(tr, () => { op2(cs, or, 'mul')(); op2(sn, oi, 'mul')(); f.f64x2Add(); });
      let_(ti, () => { op2(cs, oi, 'mul')(); op2(sn, or, 'mul')(); f.f64x2Sub(); });
      storeLanes(fk, SRE, tail, op2(er, tr, 'add'));
      storeLanes(fk, SIM, tail, op2(ei, ti, 'add'));
      storeLanes(fb, SRE, tail, op2(er, tr, 'sub'));
      storeLanes(fb, SIM, tail, op2(ti, ei, 'sub'));
    } else {
      let_(ar, () => lanes(fk, SRE, tail)); let_(ai, () => lanes(fk, SIM, tail));
      let_(br, () => lanes(fb, SRE, tail)); let_(bi, () => { lanes(fb, SIM, tail); f.f64x2Neg(); });
      let_(er, () => { f.get(half); op2(ar, br, 'add')(); f.f64x2Mul(); });
      let_(ei, () => { f.get(half); op2(ai, bi, 'add')(); f.f64x2Mul(); });
      let_(dr, () => { f.get(half); op2(ar, br, 'sub')(); f.f64x2Mul(); });
      let_(di, () => { f.get(half); op2(ai, bi, 'sub')(); f.f64x2Mul(); });
      // or = dr cs - di sn, oi = dr sn + di cs
      let_(or, () => { op2(dr, cs, 'mul')(); op2(di, sn, 'mul')(); f.f64x2Sub(); });
      let_(oi, () => { op2(dr, sn, 'mul')(); op2(di, cs, 'mul')(); f.f64x2Add(); });
      blockStore(zk, false, op2(er, oi, 'sub')); blockStore(zk, true, op2(ei, or, 'add'));
      blockStore(zb, false, op2(er, oi, 'add')); blockStore(zb, true, op2(or, ei, 'sub'));
    }
  };
  f.get(ZI).get(ZR).i32Sub().set(dzi);
  f.f64Const(0.5).f64x2Splat().set(half);
  f.f64Const(-0.5).f64x2Splat().set(nhalf);
  f.get(M).i32(1).i32ShrU().set(h);
  // x runs over the block's columns in bytes (two per pair), o over the spectra's rows.
  f.get(BW).i32(1).i32ShrU().i32(4).i32Shl().set(pairEnd);
  f.forRange(k, () => f.i32(1), () => f.get(h).i32(1).i32Add(), () => f.i32(1), () => {
    f.get(COS).get(k).i32(3).i32Shl().i32Add().f64Load().f64x2Splat().set(cs);
    f.get(SIN).get(k).i32(3).i32Shl().i32Add().f64Load().f64x2Splat().set(sn);
    const row = (kk: () => void) => {
      f.get(ZR);
      if (direction === 'in') { f.get(REV); kk(); f.i32(2).i32Shl().i32Add().i32Load(); } else kk();
      f.get(WB).i32Mul().i32Add();
    };
    row(() => f.get(k)); f.set(zk);
    row(() => f.get(M).get(k).i32Sub()); f.set(zb);
    frequency(() => f.get(k)); f.set(fk);
    frequency(() => f.get(M).get(k).i32Sub()); f.set(fb);
    f.i32(0).set(o);
    f.forRange(x, () => f.i32(0), () => f.get(pairEnd), () => f.i32(16), () => {
      body(false);
      f.get(o).get(RB).i32(1).i32Shl().i32Add().set(o);
    });
    f.get(BW).i32(1).i32And().ifElse(() => { f.get(pairEnd).set(x); body(true); });
  });
  return f;
}

/**
 * The spectral step of the helicity flux's convolutions for one column block (core/helicityFlux.ts):
 * 'transport' P^ = i kx Bn^, Q^ = i ky Bn^, R^ = i kx Fy^ - i ky Fx^ from (Bn, Fx, Fy); 'field' P^, Q^
 * from Bn alone. Inputs at natural rows, outputs at bit-reversed rows (rev), rows blockRowBytes apart;
 * kx, ky: the kernel's imaginary parts for this block, the same layout at natural rows.
 * Parameters: the inputs' (re, im) addresses, the outputs' (re, im) addresses, kx, ky, rows, rev,
 * columnBytes, blockRowBytes.
 */
function productsFunction(kind: 'transport' | 'field'): FunctionCode {
  const channels = kind === 'transport' ? 3 : 1, outputs = kind === 'transport' ? 3 : 2;
  const f = new FunctionCode(Array.from({ length: 2 * channels + 2 * outputs + 6 }, () => I32));
  const IN = 0, OUT = 2 * channels, KX = OUT + 2 * outputs, KY = KX + 1, ROWS = KY + 1, REV = ROWS + 1, CB = REV + 1, WB = CB + 1;
  const i32 = () => f.local(I32), v = () => f.local(V128);
  const y = i32(), s = i32(), o = i32(), x = i32();
  const a = v(), na = v(), b = v(), nb = v(), br = v(), bi = v(), xr = v(), xi = v(), yr = v(), yi = v();
  const load = (into: number, base: number) => { f.get(base).get(s).i32Add().get(x).i32Add().v128Load().set(into); };
  const store = (base: number, value: () => void) => { f.get(base).get(o).i32Add().get(x).i32Add(); value(); f.v128Store(); };
  const mul = (p: number, q: number) => () => { f.get(p).get(q).f64x2Mul(); };
  f.forRange(y, () => f.i32(0), () => f.get(ROWS), () => f.i32(1), () => {
    f.get(y).get(WB).i32Mul().set(s);
    f.get(REV).get(y).i32(2).i32Shl().i32Add().i32Load().get(WB).i32Mul().set(o);
    f.forRange(x, () => f.i32(0), () => f.get(CB), () => f.i32(16), () => {
      load(a, KX); load(b, KY); load(br, IN); load(bi, IN + 1);
      f.get(a).f64x2Neg().set(na); f.get(b).f64x2Neg().set(nb);
      // pr = -a im, pi = a re, qr = -b im, qi = b re
      store(OUT, mul(na, bi)); store(OUT + 1, mul(a, br));
      store(OUT + 2, mul(nb, bi)); store(OUT + 3, mul(b, br));
      if (kind === 'transport') {
        load(xr, IN + 2); load(xi, IN + 3); load(yr, IN + 4); load(yi, IN + 5);
        // rr = -a yi + b xi, ri = a yr - b xr
        store(OUT + 4, () => { mul(na, yi)(); mul(b, xi)(); f.f64x2Add(); });
        store(OUT + 5, () => { mul(a, yr)(); mul(b, xr)(); f.f64x2Sub(); });
      }
    });
  });
  return f;
}

/**
 * packRows(srcRe, srcIm, dstRe, dstIm, rows, zeroEnd, rev, rowBytes, duplicate): row y < rows of the
 * source (rows rowBytes apart) to row rev[y] of the destination, rows rows..zeroEnd-1 of it zeroed;
 * with duplicate also to row rev[y] + 1 (the size-2 stage of a transform whose upper half is zero).
 */
function packRowsFunction(): FunctionCode {
  const f = new FunctionCode([I32, I32, I32, I32, I32, I32, I32, I32, I32]);
  const SRE = 0, SIM = 1, DRE = 2, DIM = 3, ROWS = 4, ZEND = 5, REV = 6, RB = 7, DUP = 8;
  const y = f.local(I32), s = f.local(I32), d = f.local(I32), x = f.local(I32), vr = f.local(V128), vi = f.local(V128);
  const target = () => { f.get(REV).get(y).i32(2).i32Shl().i32Add().i32Load().get(RB).i32Mul().set(d); };
  const put = (offset: () => void) => {
    f.get(DRE).get(d).i32Add(); offset(); f.get(x).i32Add().get(vr).v128Store();
    f.get(DIM).get(d).i32Add(); offset(); f.get(x).i32Add().get(vi).v128Store();
  };
  const row = () => {
    put(() => f.i32(0).i32Add());
    f.get(DUP).ifElse(() => put(() => f.get(RB).i32Add()));
  };
  f.forRange(y, () => f.i32(0), () => f.get(ROWS), () => f.i32(1), () => {
    f.get(y).get(RB).i32Mul().set(s);
    target();
    f.forRange(x, () => f.i32(0), () => f.get(RB), () => f.i32(16), () => {
      f.get(SRE).get(s).i32Add().get(x).i32Add().v128Load().set(vr);
      f.get(SIM).get(s).i32Add().get(x).i32Add().v128Load().set(vi);
      row();
    });
  });
  f.forRange(y, () => f.get(ROWS), () => f.get(ZEND), () => f.i32(1), () => {
    target();
    f.f64Const(0).f64x2Splat().tee(vr).set(vi);
    f.forRange(x, () => f.i32(0), () => f.get(RB), () => f.i32(16), row);
  });
  return f;
}

/** The kernel module's bytes (built from the code above; validated before use). */
export function simdColumnsModule(): Uint8Array {
  return moduleBytes([
    { name: 'columns', code: columnsFunction() },
    { name: 'realSplitOut', code: realSplitFunction('out') },
    { name: 'realSplitIn', code: realSplitFunction('in') },
    { name: 'transportProducts', code: productsFunction('transport') },
    { name: 'fieldProducts', code: productsFunction('field') },
    { name: 'packRows', code: packRowsFunction() },
  ]);
}

type ColumnsKernel = (
  re: number, im: number, n: number, rowBytes: number, columnBytes: number, sign: number, upperHalfZero: number, cos: number, sin: number,
) => void;
type SplitKernel = (
  zr: number, zi: number, rows: number, specRe: number, specIm: number, base: number, rowBytes: number,
  shift: number, mask: number, strideBytes: number, m: number, cos: number, sin: number, rev: number, blockRowBytes: number,
) => void;

/**
 * Where frequency k of row r of a set of half spectra sits in its arrays:
 * offset + (k >>> shift) * stride + (k & mask) + r * rowStep (fft.ts builds it).
 */
export interface SpectrumLayout {
  readonly offset: number;
  readonly shift: number;
  readonly mask: number;
  readonly stride: number;
  readonly rowStep: number;
}

/** A WebAssembly memory holding transform buffers, with the SIMD column kernel bound to it. */
export interface SimdArena {
  readonly buffer: ArrayBuffer;
  /** A Float64Array of `length` inside the memory (16-byte aligned); throws when the arena is full. */
  alloc(length: number): Float64Array;
  /**
   * The memory this arena has not handed out yet, as a stretch that workspaces of one thread use in
   * turn (see SharedStretch); the caller allocates there through over(), not alloc().
   */
  rest(): SharedStretch;
  /** An arena with these kernels and tables that allocates from the start of `stretch` (of this memory). */
  over(stretch: SharedStretch): SimdArena;
  /**
   * fftColumnBlock(plan, re, im, width, 0, columns, sign, upperHalfZero, true) by the SIMD kernel;
   * returns false, doing nothing, when it cannot (arrays outside this memory, odd width, a plan
   * whose twiddles were not given at creation), and the caller runs the TypeScript loops.
   */
  columns(plan: FftPlan, re: Float64Array, im: Float64Array, width: number, columns: number, sign: -1 | 1, upperHalfZero: boolean): boolean;
  /**
   * convolvePadded's gather of one column block and the first stage of its forward transform: source
   * row y < rows (at src[offset + y*width ..], width doubles) to row rev[y] of the block (plan.n rows of
   * width), rows rows..upper-half start (or n) zeroed, then the transform as columns() with
   * upperHalfZero when 2*rows <= n. False, doing nothing, when it cannot.
   */
  packAndTransform(plan: FftPlan, srcRe: Float64Array, srcIm: Float64Array, offset: number, rows: number,
    re: Float64Array, im: Float64Array, width: number, columns: number, sign: -1 | 1): boolean;
  /**
   * realFftRows' split pass for frequencies 1..m/2 of `rows` rows: from the transformed block
   * (rows in natural order, `width` columns) to the spectra outRe/outIm laid out as `layout`.
   * False, doing nothing, when it cannot (as columns).
   */
  realSplitOut(plan: RealFftPlan, zr: Float64Array, zi: Float64Array, width: number, rows: number,
    outRe: Float64Array, outIm: Float64Array, layout: SpectrumLayout): boolean;
  /**
   * The helicity flux's spectral step for one column block by the kernel ('transport': inputs
   * Bn, Fx, Fy to P, Q, R; 'field': Bn to P, Q), with kx, ky the kernel's values for the block
   * (plan.n rows `width` apart, natural order), outputs at rows rev[y] of `plan` (whose tables the
   * arena holds). False, doing nothing, when it cannot.
   */
  products(kind: 'transport' | 'field', plan: FftPlan, inRe: readonly Float64Array[], inIm: readonly Float64Array[],
    outRe: readonly Float64Array[], outIm: readonly Float64Array[], kx: Float64Array, ky: Float64Array, width: number, columns: number): boolean;
  /** realInverseFftRows' split pass for frequencies 1..m/2: from the spectra to the block (bit-reversed rows). */
  realSplitIn(plan: RealFftPlan, re: Float64Array, im: Float64Array, layout: SpectrumLayout,
    zr: Float64Array, zi: Float64Array, width: number, rows: number): boolean;
}

/** The largest index of a half spectrum of m + 1 frequencies and `rows` rows laid out as `layout`. */
function lastIndex(layout: SpectrumLayout, m: number, rows: number): number {
  const at = (k: number) => layout.offset + (k >>> layout.shift) * layout.stride + (k & layout.mask);
  const blockEnd = ((m >>> layout.shift) << layout.shift) - 1; // the last frequency of the last full block
  return Math.max(at(m), blockEnd >= 0 ? at(blockEnd) : 0) + (rows - 1) * layout.rowStep;
}

/** Bytes an array of `length` doubles takes in an arena (alloc rounds to 16). */
export function arenaBytes(length: number): number {
  return Math.ceil(length / 2) * 16;
}

/**
 * An arena of `bytes` (the sum of arenaBytes of the arrays to be allocated) plus the twiddle tables
 * of `plans`; undefined when WebAssembly SIMD is unavailable or the memory cannot be had.
 */
export function createSimdArena(bytes: number, plans: readonly FftPlan[], realPlans: readonly RealFftPlan[] = []): SimdArena | undefined {
  // One table per length (see below).
  const complexByLength = new Map([...plans, ...realPlans.map((p) => p.half)].map((p) => [p.n, p]));
  const realByLength = new Map(realPlans.map((p) => [p.n, p]));
  let tableBytes = 0;
  for (const plan of complexByLength.values()) tableBytes += 2 * arenaBytes(plan.cos.length) + arenaBytes(Math.ceil(plan.n / 2));
  for (const plan of realByLength.values()) tableBytes += 2 * arenaBytes(plan.cos.length);
  const made = instantiateOnMemory(simdColumnsModule(), bytes + tableBytes + 16);
  if (!made) return undefined;
  const { exports, buffer } = made;
  const kernel = exports.columns as ColumnsKernel;
  const splitOut = exports.realSplitOut as SplitKernel, splitIn = exports.realSplitIn as SplitKernel;
  const transportProducts = exports.transportProducts as (...addresses: number[]) => void;
  const fieldProducts = exports.fieldProducts as (...addresses: number[]) => void;
  const packRows = exports.packRows as (...args: number[]) => void;
  const instantiate = keyedInstances(made);
  /** A bump allocator over bytes [from, limit). */
  const allocator = (from: number, limit: number) => {
    let next = from;
    return {
      alloc(length: number) {
        const size = arenaBytes(length);
        if (next + size > limit) throw new RangeError(`SIMD arena full: ${length} doubles asked, ${limit - next} bytes left`);
        const a = new Float64Array(buffer, next, length);
        next += size;
        return a;
      },
      rest: (): SharedStretch => ({ buffer, start: next, end: limit, instantiate }),
    };
  };
  const top = allocator(16, made.bytes); // address 0 left unused
  const alloc = top.alloc;
  // Tables by length: a plan is a function of its length alone (core/fft.ts), so an arena made
  // with one grid's plans serves another's of the same lengths.
  const tables = new Map<number, { cos: number; sin: number; rev: number }>();
  for (const plan of complexByLength.values()) {
    const cos = alloc(plan.cos.length), sin = alloc(plan.sin.length);
    const rev = new Uint32Array(buffer, alloc(Math.ceil(plan.n / 2)).byteOffset, plan.n);
    cos.set(plan.cos); sin.set(plan.sin); rev.set(plan.rev);
    tables.set(plan.n, { cos: cos.byteOffset, sin: sin.byteOffset, rev: rev.byteOffset });
  }
  const realTables = new Map<number, { cos: number; sin: number; rev: number }>();
  for (const plan of realByLength.values()) {
    const cos = alloc(plan.cos.length), sin = alloc(plan.sin.length);
    cos.set(plan.cos); sin.set(plan.sin);
    realTables.set(plan.n, { cos: cos.byteOffset, sin: sin.byteOffset, rev: tables.get(plan.half.n)!.rev });
  }
  const inside = (...arrays: Float64Array[]) => arrays.every((a) => a.buffer === buffer);
  const split = (
    run: SplitKernel, plan: RealFftPlan, zr: Float64Array, zi: Float64Array, width: number, rows: number,
    re: Float64Array, im: Float64Array, layout: SpectrumLayout,
  ) => {
    const t = realTables.get(plan.n), m = plan.n >> 1;
    if (!t || !inside(zr, zi, re, im) || width % 2 !== 0 || rows > width || rows < 1 || m < 2
      || zr.length < m * width || zi.length < m * width) return false;
    const last = lastIndex(layout, m, rows);
    if (layout.offset < 0 || last >= re.length || last >= im.length) return false;
    run(zr.byteOffset, zi.byteOffset, rows, re.byteOffset, im.byteOffset, layout.offset * 8, layout.rowStep * 8,
      layout.shift, layout.mask, layout.stride * 8, m, t.cos, t.sin, t.rev, width * 8);
    return true;
  };
  const arenaOn = (space: ReturnType<typeof allocator>): SimdArena => ({
    buffer,
    alloc: space.alloc,
    rest: space.rest,
    over(stretch) {
      if (stretch.buffer !== buffer) throw new RangeError('SIMD arena: a stretch of another memory');
      return arenaOn(allocator(stretch.start, stretch.end));
    },
    packAndTransform(plan, srcRe, srcIm, offset, rows, re, im, width, columns, sign) {
      const t = tables.get(plan.n), n = plan.n;
      if (!t || !inside(srcRe, srcIm, re, im) || width % 2 !== 0 || columns > width || rows > n || offset < 0
        || offset + rows * width > srcRe.length || offset + rows * width > srcIm.length || re.length < n * width || im.length < n * width) return false;
      const upperZero = n >= 2 && 2 * rows <= n;
      packRows(srcRe.byteOffset + offset * 8, srcIm.byteOffset + offset * 8, re.byteOffset, im.byteOffset, rows,
        upperZero ? n >> 1 : n, t.rev, width * 8, upperZero ? 1 : 0);
      kernel(re.byteOffset, im.byteOffset, n, width * 8, Math.ceil(columns / 2) * 16, sign, upperZero ? 2 : 0, t.cos, t.sin);
      return true;
    },
    products(kind, plan, inRe, inIm, outRe, outIm, kx, ky, width, columns) {
      const t = tables.get(plan.n), channels = kind === 'transport' ? 3 : 1, outputs = kind === 'transport' ? 3 : 2;
      const size = plan.n * width;
      if (!t || width % 2 !== 0 || columns > width || inRe.length < channels || inIm.length < channels
        || outRe.length < outputs || outIm.length < outputs) return false;
      const maps = [...inRe.slice(0, channels), ...inIm.slice(0, channels), ...outRe.slice(0, outputs), ...outIm.slice(0, outputs), kx, ky];
      if (!inside(...maps) || maps.some((a) => a.length < size)) return false;
      const addresses: number[] = [];
      for (let j = 0; j < channels; j++) addresses.push(inRe[j].byteOffset, inIm[j].byteOffset);
      for (let j = 0; j < outputs; j++) addresses.push(outRe[j].byteOffset, outIm[j].byteOffset);
      addresses.push(kx.byteOffset, ky.byteOffset, plan.n, t.rev, Math.ceil(columns / 2) * 16, width * 8);
      (kind === 'transport' ? transportProducts : fieldProducts)(...addresses);
      return true;
    },
    realSplitOut: (plan, zr, zi, width, rows, outRe, outIm, layout) => split(splitOut, plan, zr, zi, width, rows, outRe, outIm, layout),
    realSplitIn: (plan, re, im, layout, zr, zi, width, rows) => split(splitIn, plan, zr, zi, width, rows, re, im, layout),
    columns(plan, re, im, width, columns, sign, upperHalfZero) {
      const t = tables.get(plan.n);
      if (!t || re.buffer !== buffer || im.buffer !== buffer || width % 2 !== 0 || columns > width
        || re.length < plan.n * width || im.length < plan.n * width) return false;
      kernel(re.byteOffset, im.byteOffset, plan.n, width * 8, Math.ceil(columns / 2) * 16, sign, upperHalfZero ? 1 : 0, t.cos, t.sin);
      return true;
    },
  });
  return arenaOn(top);
}
