// The windowed-sum passes of one affine fit (core/velocity/affineWindowFit.ts), bound to its grid,
// its centres and the pixels their column windows read: by the WebAssembly SIMD kernels
// (core/velocity/simdWindowedSum.ts) on interior pixels with the TypeScript loops at the edges, or
// by the TypeScript loops alone. Both give the same numbers bit for bit; the buffers the kernels
// work on are allocated here (inside the kernels' memory when they run).

import type { CentreSolveShape, CentreSolver } from './simdCentreSolve.js';
import { centreSolver } from './simdCentreSolve.js';
import type { Parity, WindowedSumArena } from './simdWindowedSum.js';
import { createWindowedSumArena, windowedSumArenaBytes } from './simdWindowedSum.js';
import type { SharedStretch } from '../wasmBinary.js';
import {
  correlateColumnsAtEdges, correlateColumnsAtFused, correlateFiniteRowsEdges, correlateFiniteRowsFused, tapSymmetry,
} from './windowedSum.js';

/**
 * What a caller keeps from one affine fit to the next so that the SIMD kernels' memory is reused
 * (fresh memory costs more to touch than the kernels save: docs/speed.md, sixth round). Fits are
 * synchronous, so one workspace serves one caller at a time by construction.
 */
export interface AffineFitWorkspace {
  /** false: the TypeScript loops (the kernels are never made). */
  readonly simd: boolean;
  /**
   * The kernels and their memory: the `shared` stretch when a fit fits there, else a memory of its
   * own, made at the first fit and made again larger when a fit needs more.
   */
  arena?: WindowedSumArena;
  /**
   * Bytes of a memory this thread's other workspaces use only inside their own calls (a flux
   * kernel's, core/fluxKernel.ts), offered by the caller before a fit. A fit that fits there runs
   * there, and the workspace's own memory is let go: one scratch memory per thread, not two.
   */
  shared?: SharedStretch;
  /** Set when WebAssembly SIMD turned out to be missing: the TypeScript loops from then on. */
  unavailable?: boolean;
}

/** A workspace for affine fits; simd: false keeps the TypeScript loops (the same numbers). */
export function createAffineFitWorkspace(options: { simd?: boolean } = {}): AffineFitWorkspace {
  return { simd: options.simd ?? true };
}

export interface FitWindowPasses {
  /** Whether the SIMD kernels run. */
  readonly simd: boolean;
  /**
   * A Float64Array the passes can work on; zero-filled when `zeroed` (else it may hold what an
   * earlier fit left).
   */
  alloc(length: number, zeroed?: boolean): Float64Array;
  /**
   * out[i] = a[i] * b[i] for from <= i < to where valid[i], else 0 (a TypeScript loop either way:
   * in a kernel it would need copies of the channels in its memory, 2 MB each at 512^2, for no gain).
   */
  product(out: Float64Array, a: ArrayLike<number>, b: ArrayLike<number>, valid: Uint8Array, from: number, to: number): void;
  /** correlateFiniteRowsFused(input, nx, ny, taps, outs, rowsNeeded). */
  rows(input: Float64Array, taps: readonly Float64Array[], outs: readonly Float64Array[]): void;
  /** correlateColumnsAtFused(input, nx, ny, taps, centres, outs). */
  columns(input: Float64Array, taps: readonly Float64Array[], outs: readonly Float64Array[]): void;
  /** target[k] += coef * column[k] for k < count. */
  axpy(target: Float64Array, coef: number, column: Float64Array, count: number): void;
  /** The per-centre solve as a SIMD kernel for a fit of this shape (only with the kernels). */
  centreSolver?(shape: CentreSolveShape): CentreSolver | undefined;
}

/** The TypeScript loops. */
function typeScriptPasses(nx: number, ny: number, rowsNeeded: Uint8Array, centres: Int32Array): FitWindowPasses {
  return {
    simd: false,
    alloc: (length) => new Float64Array(length),
    product(out, a, b, valid, from, to) { for (let i = from; i < to; i++) out[i] = valid[i] ? a[i] * b[i] : 0; },
    rows: (input, taps, outs) => correlateFiniteRowsFused(input, nx, ny, taps, outs, rowsNeeded),
    columns: (input, taps, outs) => correlateColumnsAtFused(input, nx, ny, taps, centres, outs),
    axpy(target, coef, column, count) { for (let k = 0; k < count; k++) target[k] += coef * column[k]; },
  };
}

/** Runs (start, length) of the pixels of `rowsNeeded` at least r from either end of their row. */
function rowRuns(rowsNeeded: Uint8Array, nx: number, ny: number, r: number, into?: Int32Array): number {
  const lo = Math.min(r, nx), hi = Math.max(lo, nx - r);
  let runs = 0;
  for (let y = 0; y < ny; y++) {
    const row = y * nx;
    for (let x = lo; x < hi; x++) {
      if (rowsNeeded[row + x] === 0) continue;
      const start = x;
      while (x < hi && rowsNeeded[row + x] !== 0) x++;
      if (into) { into[2 * runs] = row + start; into[2 * runs + 1] = x - start; }
      runs++;
    }
  }
  return runs;
}

/** Runs (start pixel, start centre, length) of consecutive centres at least r from the top and bottom rows. */
function centreRuns(centres: Int32Array, nx: number, ny: number, r: number, into?: Int32Array): number {
  const first = r * nx, end = (ny - r) * nx;
  let runs = 0;
  for (let k = 0; k < centres.length; k++) {
    const i = centres[k];
    if (i < first || i >= end) continue;
    const start = k;
    while (k + 1 < centres.length && centres[k + 1] === centres[k] + 1 && centres[k + 1] < end) k++;
    if (into) { into[3 * runs] = i; into[3 * runs + 1] = start; into[3 * runs + 2] = k - start + 1; }
    runs++;
  }
  return runs;
}

/**
 * The passes of a fit on an nx x ny grid with window radius r, row passes at `rowsNeeded`, column
 * passes at `centres`. With a workspace that asks for SIMD, the kernels run where WebAssembly SIMD
 * is available, in its memory (grown to hold arrays of `lengths` doubles, what alloc will be asked for).
 */
export function fitWindowPasses(
  workspace: AffineFitWorkspace | undefined, nx: number, ny: number, r: number, rowsNeeded: Uint8Array, centres: Int32Array,
  lengths: readonly number[],
): FitWindowPasses {
  const plain = typeScriptPasses(nx, ny, rowsNeeded, centres);
  if (!workspace?.simd || workspace.unavailable) return plain;
  const rowRunCount = rowRuns(rowsNeeded, nx, ny, r), centreRunCount = centreRuns(centres, nx, ny, r);
  const bytes = windowedSumArenaBytes([...lengths, rowRunCount, (3 * centreRunCount) / 2, ...Array.from({ length: 5 }, () => 2 * (r + 1))]);
  let fresh = false;
  const shared = workspace.shared;
  if (shared && shared.end - shared.start + 16 >= bytes && workspace.arena?.stretch !== shared) {
    workspace.arena = createWindowedSumArena(bytes, shared) ?? workspace.arena;
  }
  if (!workspace.arena || workspace.arena.bytes < bytes) {
    // A quarter more than asked, so that a slightly larger fit next time does not make it again.
    workspace.arena = createWindowedSumArena(Math.ceil(bytes * 1.25));
    if (!workspace.arena) { workspace.unavailable = true; return plain; }
    fresh = true;
  }
  const arena: WindowedSumArena = workspace.arena;
  arena.reset();
  const rowRunList = arena.allocInt32(2 * rowRunCount), centreRunList = arena.allocInt32(3 * centreRunCount);
  rowRuns(rowsNeeded, nx, ny, r, rowRunList);
  centreRuns(centres, nx, ny, r, centreRunList);
  const splats = new Map<Float64Array, Float64Array>();
  const splat = (taps: Float64Array) => {
    let s = splats.get(taps);
    if (!s) { s = arena.splatTaps(taps); splats.set(taps, s); }
    return s;
  };
  /** The kernel over the interior in sets of up to three; false (nothing done) when it declines. */
  const interior = (kind: 'rows' | 'columns', input: Float64Array, taps: readonly Float64Array[], outs: readonly Float64Array[]) => {
    const parities = taps.map(tapSymmetry);
    if (parities.includes(0) || taps.some((t) => t.length !== 2 * r + 1)) return false;
    const runs = kind === 'rows' ? rowRunList : centreRunList, runCount = kind === 'rows' ? rowRunCount : centreRunCount;
    for (let s = 0; s < taps.length; s += 3) {
      const part = taps.slice(s, s + 3);
      if (!arena.pass(kind, input, nx, runs, runCount, part.map(splat), parities.slice(s, s + 3) as Parity[], r, outs.slice(s, s + 3))) {
        if (s === 0) return false;
        throw new RangeError('windowed-sum kernel declined part of a pass'); // cannot happen: same arrays
      }
    }
    return true;
  };
  return {
    simd: true,
    alloc(length, zeroed) {
      const a = arena.alloc(length);
      if (zeroed && !fresh) a.fill(0);
      return a;
    },
    product: plain.product,
    rows(input, taps, outs) {
      if (interior('rows', input, taps, outs)) correlateFiniteRowsEdges(input, nx, ny, taps, outs, rowsNeeded);
      else plain.rows(input, taps, outs);
    },
    columns(input, taps, outs) {
      if (interior('columns', input, taps, outs)) correlateColumnsAtEdges(input, nx, ny, taps, centres, outs);
      else plain.columns(input, taps, outs);
    },
    axpy(target, coef, column, count) { if (!arena.axpy(target, coef, column, count)) plain.axpy(target, coef, column, count); },
    centreSolver: (shape) => centreSolver(arena, shape),
  };
}
