// The affine fit's WebAssembly SIMD kernels (core/velocity/simdWindowedSum.ts, simdCentreSolve.ts) against the
// TypeScript loops: the same IEEE operations in the same order, so every velocity must agree bit
// for bit (Object.is) - dave, dave with the noise correction, dave4vm, with NaN pixels and with
// solveAt - and the loops must run where WebAssembly SIMD is missing.
import { describe, expect, it } from 'vitest';
import { differentialAffineVelocity } from '../../core/velocity/differentialAffine.js';
import { createAffineFitWorkspace, fitWindowPasses } from '../../core/velocity/fitWindowPasses.js';
import { inferVelocity } from '../../core/velocity/inferVelocity.js';
import { createWindowedSumArena, windowedSumModule } from '../../core/velocity/simdWindowedSum.js';
import { vectorAffineVelocity } from '../../core/velocity/vectorAffine.js';
import { gaussianTaps } from '../../core/velocity/windowedSum.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';

function rand(n: number, seed: number): Float64Array {
  let s = seed;
  return Float64Array.from({ length: n }, () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5);
}

/** Indices where a and b differ in any bit (NaN equal to NaN, -0 not equal to 0). */
function differing(a: ArrayLike<number>, b: ArrayLike<number>): number[] {
  const out: number[] = [];
  if (a.length !== b.length) return [-1];
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) out.push(i);
  return out;
}

function finite(a: ArrayLike<number>): number {
  let n = 0;
  for (let i = 0; i < a.length; i++) if (Number.isFinite(a[i])) n++;
  return n;
}

/** A demo pair of `size`^2 with NaN pixels (a block and a scatter), the strong-field mask, and made-up horizontal fields. */
function pair(size: number) {
  const region = demoRegion({ frames: 2, size, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
  const a = region.frameAt(0), b = region.frameAt(1);
  const n = size * size;
  const a0 = Float64Array.from(a.bn), b0 = Float64Array.from(b.bn);
  const an = Float64Array.from(a.bn), bn = Float64Array.from(b.bn);
  for (let i = 5; i < n; i += 613) an[i] = NaN;
  for (let y = size >> 2; y < (size >> 2) + 6; y++) for (let x = size >> 1; x < (size >> 1) + 9; x++) bn[y * size + x] = NaN;
  const strong = new Uint8Array(n);
  for (let i = 0; i < n; i++) strong[i] = Math.abs(0.5 * (a0[i] + b0[i])) >= 50 ? 1 : 0;
  const bx = [a0.map((v, i) => 0.3 * v + (i % 7)), b0.map((v, i) => 0.31 * v + (i % 5))] as const;
  const by = [a0.map((v, i) => -0.2 * v + (i % 3)), b0.map((v, i) => -0.21 * v + (i % 11))] as const;
  return { a, b, a0, b0, an, bn, strong, bx, by, n };
}

describe('affine fit: SIMD kernels against the TypeScript loops', () => {
  it('the module validates on Node 20 and a workspace makes its arena at the first fit', () => {
    const wasm = (globalThis as unknown as { WebAssembly: { validate(b: Uint8Array): boolean } }).WebAssembly;
    expect(wasm.validate(windowedSumModule())).toBe(true);
    const ws = createAffineFitWorkspace();
    expect(ws.arena).toBeUndefined();
    const p = pair(48);
    differentialAffineVelocity(p.a0, p.b0, 48, 48, 0.36, 0.36, 720, { sigma: 4, minPivot: 0.01, workspace: ws });
    expect(ws.arena).toBeDefined();
    expect(ws.unavailable).toBeUndefined();
    // The per-centre solve has its kernel too (dave's shape and dave4vm's).
    const passes = fitWindowPasses(ws, 48, 48, 12, new Uint8Array(48 * 48), new Int32Array(0), [1]);
    for (const [n, wanted] of [[6, [4, 5]], [9, [6, 7, 8]]] as const) {
      expect(passes.centreSolver?.({ n, wanted, diagonalAdd: Array.from({ length: n }, () => 1e-9), minSignalShare: 0.5 })).toBeDefined();
    }
  });

  it('row and column passes over odd and even runs, at the edges, for 1 to 5 tap sets of both parities', () => {
    const nx = 53, ny = 41, r = 6, size = nx * ny;
    const taps = [0, 1, 2, 3, 4].map((p) => gaussianTaps(2, r, p));
    // Needed pixels in runs of every length from 1 up (and the full rows), centres likewise.
    const rowsNeeded = new Uint8Array(size);
    for (let i = 0; i < size; i++) rowsNeeded[i] = (i % 17) < (i % 5) + 1 || (i >= 9 * nx && i < 11 * nx) ? 1 : 0;
    const centreList: number[] = [];
    for (let i = 0; i < size; i++) if ((i % 13) < (i % 4) + 1 || i < 2 * nx || i >= size - nx) centreList.push(i);
    const centres = Int32Array.from(centreList);
    const ws = createAffineFitWorkspace();
    const lengths = [20 * size, 30 * centres.length]; // room for every array the test allocates
    const simd = fitWindowPasses(ws, nx, ny, r, rowsNeeded, centres, lengths);
    const plain = fitWindowPasses(undefined, nx, ny, r, rowsNeeded, centres, lengths);
    expect(simd.simd).toBe(true);
    expect(plain.simd).toBe(false);
    const input = simd.alloc(size);
    input.set(rand(size, 3));
    const rowsS = Array.from({ length: 5 }, () => simd.alloc(size, true)), rowsT = Array.from({ length: 5 }, () => new Float64Array(size));
    for (const sets of [[0], [1], [0, 1], [1, 2], [0, 1, 2], [1, 2, 3], [0, 1, 2, 3, 4]]) {
      simd.rows(input, sets.map((p) => taps[p]), sets.map((_, s) => rowsS[s]));
      plain.rows(input, sets.map((p) => taps[p]), sets.map((_, s) => rowsT[s]));
      for (let s = 0; s < sets.length; s++) {
        expect(differing(rowsS[s], rowsT[s])).toEqual([]);
        expect(finite(rowsS[s].filter((v) => v !== 0))).toBeGreaterThan(size / 8);
      }
      const outS = Array.from({ length: sets.length }, () => simd.alloc(centres.length));
      const outT = Array.from({ length: sets.length }, () => new Float64Array(centres.length));
      simd.columns(rowsS[0], sets.map((p) => taps[p]), outS);
      plain.columns(rowsT[0], sets.map((p) => taps[p]), outT);
      for (let s = 0; s < sets.length; s++) expect(differing(outS[s], outT[s])).toEqual([]);
    }
    // The accumulation, odd and even lengths.
    const pS = simd.alloc(size);
    pS.set(rand(size, 4));
    for (const count of [1, 2, 7, 64]) {
      const tS = simd.alloc(count), tT = new Float64Array(count);
      tS.set(rand(count, count)); tT.set(tS);
      simd.axpy(tS, -0.37, pS, count);
      plain.axpy(tT, -0.37, pS, count);
      expect(differing(tS, tT)).toEqual([]);
    }
  });

  it('dave, dave with the noise correction and dave4vm, with NaN pixels and solveAt: bit-identical velocities', () => {
    // One workspace through every case and grid sizes up and down: its memory grows (made again
    // larger) and is reused, not zeroed, between fits.
    const ws = createAffineFitWorkspace();
    const arenas: unknown[] = [];
    for (const size of [64, 96, 64]) {
      const p = pair(size);
      const cases: [string, Float64Array, Float64Array, object][] = [
        ['dave', p.a0, p.b0, {}],
        ['dave solveAt', p.a0, p.b0, { solveAt: p.strong }],
        ['dave noise-corrected solveAt', p.a0, p.b0, { solveAt: p.strong, noise: { bn: 5 } }],
        ['dave NaN pixels noise-corrected', p.an, p.bn, { noise: { bn: 5 } }],
        ['dave NaN pixels solveAt', p.an, p.bn, { solveAt: p.strong }],
      ];
      for (const [label, a, b, extra] of cases) {
        const base = { sigma: 4, minPivot: 0.01, ...extra };
        const ts = differentialAffineVelocity(a, b, size, size, 0.36, 0.36, 720, { ...base, simd: false });
        expect(finite(ts.vx), label).toBeGreaterThan(0.05 * p.n);
        for (const options of [{ ...base, workspace: ws }, { ...base, simd: true }]) {
          const s = differentialAffineVelocity(a, b, size, size, 0.36, 0.36, 720, options);
          expect(differing(s.vx, ts.vx), label).toEqual([]);
          expect(differing(s.vy, ts.vy), label).toEqual([]);
          expect(s.illConditioned).toBe(ts.illConditioned);
        }
      }
      for (const [label, bnPair, extra] of [
        ['dave4vm', [p.a0, p.b0], {}],
        ['dave4vm NaN pixels noise-corrected solveAt', [p.an, p.bn], { solveAt: p.strong, noise: { bn: 0.5, bt: 0.4 } }],
      ] as const) {
        const vp = { bn: bnPair, bx: p.bx, by: p.by };
        const base = { sigma: 4, minPivot: 0.01, ...extra };
        const ts = vectorAffineVelocity(vp, size, size, 0.36, 0.36, 720, { ...base, simd: false });
        expect(finite(ts.vz), label).toBeGreaterThan(0.01 * p.n);
        const s = vectorAffineVelocity(vp, size, size, 0.36, 0.36, 720, { ...base, workspace: ws });
        for (const k of ['vx', 'vy', 'vz'] as const) expect(differing(s[k], ts[k]), `${label} ${k}`).toEqual([]);
        expect(s.illConditioned).toBe(ts.illConditioned);
        expect(ts.illConditioned, label).toBeGreaterThan(0);
      }
      // Through inferVelocity, as a caller keeping a workspace would call it.
      const plainInferred = inferVelocity(p.a, p.b);
      const withWorkspace = inferVelocity(p.a, p.b, {}, ws);
      expect(differing(withWorkspace.vx, plainInferred.vx)).toEqual([]);
      expect(differing(withWorkspace.vy, plainInferred.vy)).toEqual([]);
      arenas.push(ws.arena);
    }
    expect(ws.unavailable).toBeUndefined();
    expect(arenas[1]).not.toBe(arenas[0]); // grown for 96^2
    expect(arenas[2]).toBe(arenas[1]); // and kept for 64^2
  });

  it('without WebAssembly, or where it rejects the module, the workspace keeps the TypeScript loops (same numbers)', () => {
    const p = pair(48);
    const options = { sigma: 4, minPivot: 0.01, solveAt: p.strong };
    const reference = differentialAffineVelocity(p.an, p.bn, 48, 48, 0.36, 0.36, 720, { ...options, simd: false });
    const g = globalThis as unknown as { WebAssembly?: { validate(b: Uint8Array): boolean } };
    const saved = g.WebAssembly!, validate = saved.validate;
    try {
      saved.validate = () => false; // a runtime without the SIMD instructions
      expect(createWindowedSumArena(1 << 16)).toBeUndefined();
      const rejected = createAffineFitWorkspace();
      const r1 = differentialAffineVelocity(p.an, p.bn, 48, 48, 0.36, 0.36, 720, { ...options, workspace: rejected });
      expect(rejected.unavailable).toBe(true);
      saved.validate = validate;
      delete g.WebAssembly; // no WebAssembly at all
      const none = createAffineFitWorkspace();
      const r2 = differentialAffineVelocity(p.an, p.bn, 48, 48, 0.36, 0.36, 720, { ...options, workspace: none });
      expect(none.unavailable).toBe(true);
      for (const r of [r1, r2]) {
        expect(differing(r.vx, reference.vx)).toEqual([]);
        expect(differing(r.vy, reference.vy)).toEqual([]);
      }
    } finally {
      saved.validate = validate;
      g.WebAssembly = saved;
    }
    // A workspace asked for the loops never makes the kernels.
    const loops = createAffineFitWorkspace({ simd: false });
    differentialAffineVelocity(p.an, p.bn, 48, 48, 0.36, 0.36, 720, { ...options, workspace: loops });
    expect(loops.arena).toBeUndefined();
  });

  it('the arena declines arrays outside its memory and throws when full', () => {
    const arena = createWindowedSumArena(1 << 16)!;
    const inside = arena.alloc(64), outside = new Float64Array(64);
    expect(arena.axpy(outside, 1, inside, 64)).toBe(false);
    expect(arena.axpy(inside, 1, outside, 64)).toBe(false);
    expect(arena.axpy(inside, 2, inside, 64)).toBe(true);
    expect(() => arena.alloc(1 << 14)).toThrow(/arena full/);
  });
});
