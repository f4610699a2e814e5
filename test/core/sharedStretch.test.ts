// One scratch memory per thread: a flux kernel lends the bytes of its workspace (its stretch,
// core/fluxKernel.ts) to the label split's pair grids and to the affine fit, which run between its
// convolutions and never inside one. Whatever one leaves there the next overwrites, so these tests
// scribble on the stretch between calls and ask for the numbers of separate memories bit for bit
// (Object.is): a workspace that kept anything in the stretch from one call to the next would differ.
import { describe, expect, it } from 'vitest';
import { boxPairSum, boxSpectra, createPairGrids, pairGrid, pairGridSize } from '../../core/boxPairSum.js';
import type { PixelBox } from '../../core/boxPairSum.js';
import { createFluxKernel, kernelKey } from '../../core/fluxKernel.js';
import type { FluxKernel } from '../../core/fluxKernel.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { AnalysisState } from '../../core/frameAnalysis.js';
import type { FrameCache } from '../../core/frameTasks.js';
import { convolveTransport } from '../../core/helicityFlux.js';
import { differentialAffineVelocity } from '../../core/velocity/differentialAffine.js';
import { createAffineFitWorkspace } from '../../core/velocity/fitWindowPasses.js';
import { createWindowedSumArena } from '../../core/velocity/simdWindowedSum.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { seededRandom } from '../support/random.js';

const r = seededRandom(11);
const noise = (n: number, scale: number) => Float64Array.from({ length: n }, () => scale * (r() - 0.5));

/** A whole-grid convolution with random maps: writes over all of the kernel's workspace. */
function scribble(kernel: FluxKernel): void {
  const n = kernel.nx * kernel.ny;
  convolveTransport(kernel, { bn: noise(n, 3000), fx: noise(n, 900), fy: noise(n, 900) });
}

function boxMaps(box: PixelBox) {
  const n = box.w * box.h;
  return { bn: noise(n, 2000), fx: noise(n, 500), fy: noise(n, 500) };
}

describe('the flux kernel\'s stretch, shared by the thread\'s workspaces', () => {
  it('pair sums on the stretch, with convolutions between the calls, equal those on a memory of their own', () => {
    const kernel = createFluxKernel({ nx: 128, ny: 128, dx: 0.36, dy: 0.36 }, { simd: true });
    const a = { x0: 10, y0: 12, w: 40, h: 31 }, b = { x0: 70, y0: 60, w: 37, h: 45 };
    const am = boxMaps(a), bm = boxMaps(b);
    const { px, py } = pairGridSize(a, b);
    const lent = createPairGrids(px, py, { kernel }), own = createPairGrids(px, py);
    // The buffers lie in the kernel's memory, inside its stretch; the others have one of their own.
    expect(lent.work.simd!.buffer).toBe(kernel.arena!.buffer);
    for (const m of [lent.kx, lent.work.rowRe[2], lent.work.outIm[2]]) {
      expect(m.byteOffset).toBeGreaterThanOrEqual(kernel.stretch!.start);
      expect(m.byteOffset + m.byteLength).toBeLessThanOrEqual(kernel.stretch!.end);
    }
    expect(own.work.simd!.buffer).not.toBe(kernel.arena!.buffer);
    const gl = pairGrid(lent, px, py), go = pairGrid(own, px, py);
    scribble(kernel);
    const sa = boxSpectra(am, a, gl);
    scribble(kernel);
    const sb = boxSpectra(bm, b, gl);
    scribble(kernel);
    const ab = boxPairSum(a, sa, b, sb, gl, 0.36, 0.36);
    scribble(kernel);
    const ba = boxPairSum(b, sb, a, sa, gl, 0.36, 0.36);
    const oa = boxSpectra(am, a, go), ob = boxSpectra(bm, b, go);
    expect(Object.is(ab, boxPairSum(a, oa, b, ob, go, 0.36, 0.36))).toBe(true);
    expect(Object.is(ba, boxPairSum(b, ob, a, oa, go, 0.36, 0.36))).toBe(true);
    expect(Number.isFinite(ab) && ab !== 0).toBe(true);
  });

  it('pair grids larger than the kernel\'s padded grid or its stretch, or beside a kernel without SIMD, get a memory of their own', () => {
    const grid = { nx: 64, ny: 64, dx: 1, dy: 1 };
    // The 64^2 kernel's workspace (padded 128^2, 3 channels) holds 64^2 pair grids but not 128^2 ones.
    const plain = createFluxKernel(grid, { simd: true });
    expect(createPairGrids(64, 64, { kernel: plain }).work.simd!.buffer).toBe(plain.arena!.buffer);
    expect(createPairGrids(128, 128, { kernel: plain }).work.simd!.buffer).not.toBe(plain.arena!.buffer);
    // Room made for more: 128^2 now fits, 256 columns are past its tables.
    const roomy = createFluxKernel(grid, { simd: true, scratchBytes: 2e6 });
    expect(createPairGrids(128, 128, { kernel: roomy }).work.simd!.buffer).toBe(roomy.arena!.buffer);
    expect(createPairGrids(256, 128, { kernel: roomy }).work.simd!.buffer).not.toBe(roomy.arena!.buffer);
    const loops = createFluxKernel(grid, { simd: false });
    expect(loops.stretch).toBeUndefined();
    expect(createPairGrids(64, 64, { kernel: loops }).work.simd).toBeDefined();
  });

  it('the affine fit on the stretch, with convolutions between fits, gives the velocities of its own memory; too large a fit gets its own', () => {
    const size = 96;
    const region = demoRegion({ frames: 2, size, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
    const a = region.frameAt(0).bn, b = region.frameAt(1).bn;
    const kernel = createFluxKernel({ nx: size, ny: size, dx: 0.36, dy: 0.36 }, { simd: true, scratchBytes: 8e6 });
    const shared = createAffineFitWorkspace(), own = createAffineFitWorkspace();
    shared.shared = kernel.stretch;
    const fit = (workspace: typeof own) => differentialAffineVelocity(a, b, size, size, 0.36, 0.36, 720, { sigma: 4, minPivot: 0.01, workspace });
    const want = fit(own);
    for (let k = 0; k < 2; k++) {
      scribble(kernel);
      const got = fit(shared);
      expect(shared.arena!.stretch).toBe(kernel.stretch);
      for (const key of ['vx', 'vy'] as const) {
        let same = 0;
        for (let i = 0; i < size * size; i++) if (Object.is(got[key][i], want[key][i])) same++;
        expect(same).toBe(size * size);
      }
    }
    expect(own.arena!.stretch).toBeUndefined();
    // A stretch smaller than the fit needs: the fit keeps a memory of its own.
    const tiny = createFluxKernel({ nx: 16, ny: 16, dx: 0.36, dy: 0.36 }, { simd: true });
    const fallback = createAffineFitWorkspace();
    fallback.shared = tiny.stretch;
    const got = fit(fallback);
    expect(fallback.arena!.stretch).toBeUndefined();
    expect(Array.from(got.vx).every((v, i) => Object.is(v, want.vx[i]))).toBe(true);
  });

  it('a windowed-sum arena over a stretch allocates inside it, from its start after a reset, and says when it is full', () => {
    const kernel = createFluxKernel({ nx: 64, ny: 64, dx: 1, dy: 1 }, { simd: true });
    const stretch = kernel.stretch!;
    const arena = createWindowedSumArena(0, stretch)!;
    expect(arena.bytes).toBe(stretch.end - stretch.start + 16);
    const first = arena.alloc(100);
    expect(first.buffer).toBe(kernel.arena!.buffer);
    expect(first.byteOffset).toBe(stretch.start);
    arena.alloc(1000);
    arena.reset();
    expect(arena.alloc(8).byteOffset).toBe(stretch.start);
    expect(() => arena.alloc((stretch.end - stretch.start) / 8)).toThrow(/arena full/);
  });

  it('analyseFrame over four frames with one cache: one memory per thread, and the numbers of an analysis without a cache', () => {
    const size = 256;
    const region = demoRegion({ frames: 4, size, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 40 });
    const cache: FrameCache = new Map();
    let kept: AnalysisState = {}, fresh: AnalysisState = {};
    for (let k = 0; k < 4; k++) {
      const frame = region.frameAt(k);
      const withCache = analyseFrame(frame, kept, {}, cache), without = analyseFrame(frame, fresh, {});
      kept = withCache.state; fresh = without.state;
      if (k === 0) continue;
      expect(withCache.sample).toEqual(without.sample);
      expect(withCache.footpoints!.exact).toEqual(without.footpoints!.exact);
      expect(withCache.footpoints!.pairMatrix).toEqual(without.footpoints!.pairMatrix);
    }
    const kernel = cache.get(kernelKey(region.frameAt(0)))!;
    expect(cache.affineFit!.arena!.stretch).toBe(kernel.stretch);
    expect(cache.pairGrids!.work.simd!.buffer).toBe(kernel.arena!.buffer);
  });
});
