// The WebAssembly SIMD column kernel against the TypeScript loops it replaces: the same IEEE
// operations in the same order, so the numbers must agree bit for bit (Object.is), on every path
// that uses it (column blocks, batched real rows, the fused padded convolution, the helicity flux,
// a whole frame), and the TypeScript fallback must be taken when the kernel cannot run.
import { describe, expect, it } from 'vitest';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { createFftPlan, createRealFftPlan, createRowBlock, fftColumnBlock, realFftRows, realInverseFftRows, rowBlockLength } from '../../core/fft.js';
import { SIMD_MIN_PADDED_PIXELS, createFluxKernel, fluxKernelFor, kernelWorkspace } from '../../core/fluxKernel.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { convolveField, convolveTransport, helicityFlux } from '../../core/helicityFlux.js';
import { SPECTRUM_BLOCK, convolvePadded, createPaddedPlan, createPaddedWorkspace } from '../../core/paddedTransform.js';
import type { SpectralStep } from '../../core/paddedTransform.js';
import { arenaBytes, createSimdArena, simdColumnsModule } from '../../core/simdColumns.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';

function rand(n: number, seed: number): Float64Array {
  let s = seed;
  return Float64Array.from({ length: n }, () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5);
}

/** Indices where a and b differ in any bit (NaN equal to NaN, -0 not equal to 0). */
function differing(a: ArrayLike<number>, b: ArrayLike<number>, count = a.length): number[] {
  const out: number[] = [];
  for (let i = 0; i < count; i++) if (!Object.is(a[i], b[i])) out.push(i);
  return out;
}

describe('SIMD column kernel', () => {
  it('the module validates and an arena is made on Node 20 (WebAssembly SIMD is part of its V8)', () => {
    const wasm = (globalThis as unknown as { WebAssembly: { validate(b: Uint8Array): boolean } }).WebAssembly;
    expect(wasm.validate(simdColumnsModule())).toBe(true);
    expect(createSimdArena(1024, [createFftPlan(8)])).toBeDefined();
  });

  for (const n of [1, 2, 4, 8, 16, 32, 256, 1024]) {
    it(`column block of ${n} rows: bit-identical to fftColumnBlock (odd and even column counts, both signs, zero upper half)`, () => {
      const W = 16, plan = createFftPlan(n);
      const arena = createSimdArena(2 * arenaBytes(n * W), [plan])!;
      const re = arena.alloc(n * W), im = arena.alloc(n * W);
      for (const columns of [1, 2, 7, 16]) for (const sign of [-1, 1] as const) for (const upperHalfZero of [false, true]) {
        re.set(rand(n * W, n + columns)); im.set(rand(n * W, 3 * n + columns));
        // Bit-reversed input with the upper half zero: input rows >= n/2 sit at the odd rows.
        if (upperHalfZero && n >= 2) for (let r = 1; r < n; r += 2) { re.fill(0, r * W, r * W + W); im.fill(0, r * W, r * W + W); }
        const tr = Float64Array.from(re), ti = Float64Array.from(im);
        expect(arena.columns(plan, re, im, W, columns, sign, upperHalfZero)).toBe(true);
        fftColumnBlock(plan, tr, ti, W, 0, columns, sign, upperHalfZero, true);
        for (let r = 0; r < n; r++) {
          expect(differing(re.subarray(r * W), tr.subarray(r * W), columns)).toEqual([]);
          expect(differing(im.subarray(r * W), ti.subarray(r * W), columns)).toEqual([]);
        }
        // Not a no-op: a transform of random rows changes them (n >= 2).
        if (n >= 2) expect(differing(re, rand(n * W, n + columns)).length).toBeGreaterThan(0);
      }
    });
  }

  it('without WebAssembly, or where it rejects the SIMD module, no arena is made and the kernel runs the TypeScript loops', () => {
    const frame = { nx: 130, ny: 120, dx: 0.36, dy: 0.36 };
    const bn = rand(130 * 120, 9).map((v) => 100 * v), fx = rand(130 * 120, 10), fy = rand(130 * 120, 11);
    const reference = convolveTransport(createFluxKernel(frame), { bn, fx, fy });
    const g = globalThis as unknown as { WebAssembly?: { validate(b: Uint8Array): boolean } };
    const saved = g.WebAssembly!, validate = saved.validate;
    try {
      saved.validate = () => false; // a runtime without the SIMD instructions
      expect(createSimdArena(1024, [createFftPlan(8)])).toBeUndefined();
      const rejected = createFluxKernel(frame);
      expect(rejected.arena).toBeUndefined();
      saved.validate = validate;
      delete g.WebAssembly; // no WebAssembly at all
      expect(createSimdArena(1024, [createFftPlan(8)])).toBeUndefined();
      const none = createFluxKernel(frame);
      expect(none.arena).toBeUndefined();
      for (const k of [rejected, none]) {
        const out = convolveTransport(k, { bn, fx, fy });
        expect(kernelWorkspace(k).simd).toBeUndefined();
        for (const key of ['p', 'q', 'r'] as const) expect(differing(out[key], reference[key])).toEqual([]);
      }
    } finally {
      saved.validate = validate;
      g.WebAssembly = saved;
    }
    expect(createFluxKernel(frame).arena).toBeDefined();
  });

  it('declines arrays outside its memory, odd widths and unknown plans, and the caller falls back', () => {
    const plan = createFftPlan(16), other = createFftPlan(32);
    const arena = createSimdArena(4 * arenaBytes(16 * 16), [plan])!;
    const inRe = arena.alloc(16 * 16), inIm = arena.alloc(16 * 16);
    expect(arena.columns(plan, new Float64Array(256), new Float64Array(256), 16, 16, -1, false)).toBe(false);
    expect(arena.columns(plan, inRe, new Float64Array(256), 16, 16, -1, false)).toBe(false);
    expect(arena.columns(plan, inRe, inIm, 15, 15, -1, false)).toBe(false);
    expect(arena.columns(other, inRe, inIm, 8, 8, -1, false)).toBe(false);
    expect(() => arena.alloc(65536 / 8 * 2)).toThrow(/arena full/);
    // A workspace asked not to use SIMD holds plain arrays.
    const padded = createPaddedPlan(20, 10);
    const plain = createPaddedWorkspace(padded, 2, { simd: false });
    expect(plain.simd).toBeUndefined();
    expect(plain.inRe[0].buffer).not.toBe(createPaddedWorkspace(padded, 2).inRe[0].buffer);
    expect(createPaddedWorkspace(padded, 2).simd).toBeDefined();
  });
});

describe('batched real rows with the SIMD kernels equal the TypeScript loops bit for bit', () => {
  for (const [n, count, rows] of [[2, 1, 3], [4, 3, 2], [8, 5, 17], [64, 64, 16], [64, 20, 33], [512, 256, 40], [512, 511, 1]] as const) {
    for (const spectrumBlock of [0, 16]) {
      it(`length ${n}, ${count} samples, ${rows} rows, spectra ${spectrumBlock ? 'by blocks of 16 frequencies' : 'row by row'}, forward and inverse`, () => {
        const plan = createRealFftPlan(n), w = n / 2 + 1;
        // Spectra in the arena too, so that the split passes run in WebAssembly; the reference on plain arrays.
        const specLength = spectrumBlock ? Math.ceil(w / 16) * 16 * rows : w * rows;
        const stride = spectrumBlock ? 16 * rows : w;
        const arena = createSimdArena(2 * arenaBytes(rowBlockLength(plan)) + 2 * arenaBytes(specLength), [], [plan])!;
        // Count the split passes the kernels took (they decline only below m = 2).
        const taken = { out: 0, in: 0 }, { realSplitOut, realSplitIn } = arena;
        arena.realSplitOut = (...a) => { const r = realSplitOut(...a); taken.out += r ? 1 : 0; return r; };
        arena.realSplitIn = (...a) => { const r = realSplitIn(...a); taken.in += r ? 1 : 0; return r; };
        const simd = createRowBlock(plan, arena), plain = createRowBlock(plan);
        expect(simd.simd).toBe(arena);
        const x = rand(count * rows, n + rows);
        const sr = arena.alloc(specLength), si = arena.alloc(specLength);
        const tr = new Float64Array(specLength), ti = new Float64Array(specLength);
        realFftRows(plan, x, 0, count, count, rows, sr, si, 0, stride, simd, spectrumBlock);
        realFftRows(plan, x, 0, count, count, rows, tr, ti, 0, stride, plain, spectrumBlock);
        expect(differing(sr, tr)).toEqual([]);
        expect(differing(si, ti)).toEqual([]);
        expect(tr.some((v) => v !== 0)).toBe(true);
        const a = new Float64Array(count * rows), b = new Float64Array(count * rows);
        realInverseFftRows(plan, sr, si, 0, stride, rows, a, 0, count, count, 1, simd, spectrumBlock);
        realInverseFftRows(plan, tr, ti, 0, stride, rows, b, 0, count, count, 1, plain, spectrumBlock);
        expect(differing(a, b)).toEqual([]);
        for (let i = 0; i < x.length; i++) expect(a[i]).toBeCloseTo(x[i], 12); // the round trip returns the input
        const blocks = n >= 4 ? Math.ceil(rows / 16) : 0;
        expect(taken).toEqual({ out: blocks, in: blocks });
      });
    }
  }

  it('the split passes decline spectra outside the arena or too short for the rows asked, and the TypeScript loops run', () => {
    const plan = createRealFftPlan(16), w = 9, rows = 3;
    const arena = createSimdArena(2 * arenaBytes(rowBlockLength(plan)) + 2 * arenaBytes(w * rows), [], [plan])!;
    const block = createRowBlock(plan, arena);
    const layout = { offset: 0, shift: 31, mask: -1, stride: 0, rowStep: w };
    const inRe = arena.alloc(w * rows), inIm = arena.alloc(w * rows);
    expect(arena.realSplitOut(plan, block.re, block.im, 16, rows, new Float64Array(w * rows), inIm, layout)).toBe(false);
    expect(arena.realSplitOut(plan, block.re, block.im, 16, rows + 1, inRe, inIm, layout)).toBe(false);
    expect(arena.realSplitIn(plan, inRe, inIm, { ...layout, offset: 1 }, block.re, block.im, 16, rows)).toBe(false);
    expect(arena.realSplitIn(plan, inRe, inIm, layout, block.re, block.im, 16, rows)).toBe(true);
    // Plain spectra through a block in the arena: the split runs in TypeScript, the same numbers as a plain block.
    const x = rand(16 * rows, 3), sr = new Float64Array(w * rows), si = new Float64Array(w * rows), tr = new Float64Array(w * rows), ti = new Float64Array(w * rows);
    realFftRows(plan, x, 0, 16, 16, rows, sr, si, 0, w, block);
    realFftRows(plan, x, 0, 16, 16, rows, tr, ti, 0, w, createRowBlock(plan));
    expect(differing(sr, tr)).toEqual([]);
    expect(differing(si, ti)).toEqual([]);
  });
});

describe('convolvePadded and the helicity flux: SIMD workspace against the forced TypeScript fallback', () => {
  // i k A^ and A^ B^, the two kinds of products the helicity flux forms.
  const stepFor = (k: Float64Array, w: number): SpectralStep => (inRe, inIm, outRe, outIm, c0, width, rev) => {
    for (let ky = 0; ky < rev.length; ky++) for (let c = 0; c < width; c++) {
      const s = ky * SPECTRUM_BLOCK + c, o = rev[ky] * SPECTRUM_BLOCK + c, kk = k[ky * w + c0 + c];
      outRe[0][o] = -kk * inIm[0][s]; outIm[0][o] = kk * inRe[0][s];
      outRe[1][o] = inRe[0][s] * inRe[1][s] - inIm[0][s] * inIm[1][s];
      outIm[1][o] = inRe[0][s] * inIm[1][s] + inIm[0][s] * inRe[1][s];
    }
  };
  for (const [nx, ny] of [[1, 1], [1, 6], [5, 1], [13, 9], [40, 33], [64, 64], [100, 37]] as const) {
    it(`${nx}x${ny}, with zero input rows and an output row mask`, () => {
      const plan = createPaddedPlan(nx, ny);
      const simd = createPaddedWorkspace(plan, 2), plain = createPaddedWorkspace(plan, 2, { simd: false });
      expect(simd.simd).toBeDefined();
      let packed = 0;
      const arena = simd.simd!, { packAndTransform } = arena;
      arena.packAndTransform = (...a) => { const r = packAndTransform(...a); packed += r ? 1 : 0; return r; };
      const a = rand(nx * ny, nx + 11), b = rand(nx * ny, ny + 12);
      for (let y = 1; y < ny; y += 3) a.fill(0, y * nx, y * nx + nx); // zero rows are skipped, never NaN
      const k = rand(plan.w * plan.py, 13), step = stepFor(k, plan.w);
      const rows = new Uint8Array(ny).map((_, y) => (y % 4 === 1 ? 0 : 1));
      for (const mask of [undefined, rows]) {
        const s1 = new Float64Array(nx * ny), s2 = new Float64Array(nx * ny), t1 = new Float64Array(nx * ny), t2 = new Float64Array(nx * ny);
        convolvePadded(plan, simd, [a, b], [s1, s2], step, mask);
        convolvePadded(plan, plain, [a, b], [t1, t2], step, mask);
        expect(differing(s1, t1)).toEqual([]);
        expect(differing(s2, t2)).toEqual([]);
        expect(s1.some((v) => v !== 0)).toBe(true);
        expect(s1.every(Number.isFinite)).toBe(true);
      }
      expect(packed).toBe(2 * 2 * Math.ceil(plan.w / SPECTRUM_BLOCK)); // two calls, two inputs, every column block
    });
  }

  it('helicityFlux on a 96x70 map with NaN pixels: G_theta, G_A, A_p and the totals bit-identical', () => {
    const nx = 96, ny = 70, n = nx * ny;
    const bn = rand(n, 5).map((v) => 300 * v), vx = rand(n, 6), vy = rand(n, 7);
    for (const i of [0, 17, 2000, n - 1]) bn[i] = NaN;
    const frame = { time: 0, nx, ny, dx: 0.36, dy: 0.36, bn, vx, vy };
    const t = fluxTransport(frame);
    const kSimd = createFluxKernel(frame), kPlain = createFluxKernel(frame, { simd: false });
    // Below the size threshold the TypeScript loops are the default; { simd: true } asks for the kernels.
    expect(createFluxKernel({ nx: 40, ny: 30, dx: 1, dy: 1 }).arena).toBeUndefined();
    expect(kernelWorkspace(createFluxKernel({ nx: 40, ny: 30, dx: 1, dy: 1 })).simd).toBeUndefined();
    expect(createFluxKernel({ nx: 40, ny: 30, dx: 1, dy: 1 }, { simd: true }).arena).toBeDefined();
    const s = helicityFlux(kSimd, t), p = helicityFlux(kPlain, t);
    expect(kernelWorkspace(kSimd).simd).toBeDefined();
    expect(kernelWorkspace(kPlain).simd).toBeUndefined();
    expect(Object.is(s.total, p.total)).toBe(true);
    expect(Object.is(s.totalGa, p.totalGa)).toBe(true);
    for (const key of ['gTheta', 'gA', 'apx', 'apy'] as const) expect(differing(s[key], p[key])).toEqual([]);
    expect(Number.isNaN(s.gTheta[17])).toBe(true);
    expect(kSimd.arena).toBeDefined();
    expect(kSimd.kxIm.buffer).toBe(kSimd.arena!.buffer); // the products run in the arena
    expect(kPlain.arena).toBeUndefined();
    const fs = convolveField(kSimd, t.bn), fp = convolveField(kPlain, t.bn);
    expect(differing(fs.p, fp.p)).toEqual([]);
    expect(differing(fs.q, fp.q)).toEqual([]);
    const rows = new Uint8Array(ny).map((_, y) => (y % 5 === 2 ? 1 : 0));
    const rs = convolveTransport(kSimd, t, rows), rp = convolveTransport(kPlain, t, rows);
    for (const key of ['p', 'q', 'r'] as const) expect(differing(rs[key], rp[key])).toEqual([]);
  });

  it('analyseFrame on the 512^2 demo pair: the same totals with and without SIMD (to 1e-12 relative; bit-identical expected)', () => {
    const region = demoRegion({ frames: 2, size: 512, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
    const f0 = region.frameAt(0), f1 = region.frameAt(1);
    const run = (cache: FluxKernelCache) => {
      const state = analyseFrame(f0, {}, {}, cache).state;
      return analyseFrame(f1, state, {}, cache).sample!;
    };
    const simdCache: FluxKernelCache = new Map();
    const s = run(simdCache);
    // The fallback run: every grid the frame met (its own and the label split's boxes) gets a kernel without SIMD first.
    const plainCache: FluxKernelCache = new Map();
    for (const k of simdCache.values()) fluxKernelFor(k, plainCache, { simd: false });
    const p = run(plainCache);
    expect(plainCache.size).toBe(simdCache.size);
    for (const k of simdCache.values()) if (k.scratch.workspace) expect(k.scratch.workspace.simd !== undefined).toBe(k.plan.px * k.plan.py >= SIMD_MIN_PADDED_PIXELS);
    expect([...simdCache.values()].some((k) => k.arena)).toBe(true);
    for (const k of plainCache.values()) if (k.scratch.workspace) expect(k.scratch.workspace.simd).toBeUndefined();
    expect(Number.isFinite(s.total)).toBe(true);
    expect(Math.abs(s.total - p.total)).toBeLessThanOrEqual(1e-12 * Math.abs(p.total));
    expect(s.total).toBe(p.total);
  }, 120_000);
});
