import { describe, expect, it } from 'vitest';
import { boxPairSum, boxSpectra, createPairGrids, pairGrid, pairGridSize, spectraSpace } from '../../core/boxPairSum.js';
import type { PixelBox } from '../../core/boxPairSum.js';
import { createFluxKernel } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { joinSplitParts, splitByLabels, splitPart } from '../../core/labelSplit.js';
import { CM_PER_MM } from '../../core/units.js';
import { seededRandom } from '../support/random.js';

// The pair sum written out from its definition: the bracket of the helicity-flux pair weight
// (Pariat, Demoulin & Berger 2005), source pixels s of box a, target pixels t of box b, on the frame grid.
function bruteBracket(a: PixelBox, am: Maps, b: PixelBox, bm: Maps, dx: number, dy: number): number {
  const scale = dx * dy * CM_PER_MM;
  let s = 0;
  for (let ty = 0; ty < b.h; ty++) for (let tx = 0; tx < b.w; tx++) {
    const t = ty * b.w + tx;
    for (let sy = 0; sy < a.h; sy++) for (let sx = 0; sx < a.w; sx++) {
      const u = sy * a.w + sx;
      const X = (b.x0 + tx - a.x0 - sx) * dx, Y = (b.y0 + ty - a.y0 - sy) * dy;
      if (X === 0 && Y === 0) continue;
      const kx = (X * scale) / (X * X + Y * Y), ky = (Y * scale) / (X * X + Y * Y);
      s += kx * (bm.fy[t] * am.bn[u] - bm.bn[t] * am.fy[u]) - ky * (bm.fx[t] * am.bn[u] - bm.bn[t] * am.fx[u]);
    }
  }
  return s;
}

interface Maps { bn: Float64Array; fx: Float64Array; fy: Float64Array }

function randomMaps(box: PixelBox, r: () => number): Maps {
  const n = box.w * box.h;
  // Some pixels off the footpoint (zero), as a footpoint's box holds.
  const pick = () => Float64Array.from({ length: n }, () => 0);
  const m = { bn: pick(), fx: pick(), fy: pick() };
  for (let i = 0; i < n; i++) {
    if (r() < 0.25) continue;
    m.bn[i] = 2000 * (r() - 0.4); m.fx[i] = m.bn[i] * (r() - 0.5); m.fy[i] = m.bn[i] * (r() - 0.5);
  }
  return m;
}

describe('pair sum of two footpoints over their boxes', () => {
  const r = seededRandom(7);
  const cases: [PixelBox, PixelBox][] = [
    [{ x0: 3, y0: 4, w: 9, h: 7 }, { x0: 40, y0: 22, w: 13, h: 11 }], // apart
    [{ x0: 10, y0: 10, w: 12, h: 9 }, { x0: 15, y0: 13, w: 10, h: 14 }], // overlapping boxes
    [{ x0: 30, y0: 5, w: 1, h: 1 }, { x0: 2, y0: 40, w: 17, h: 3 }], // one pixel; thin box, b left of a
    [{ x0: 0, y0: 0, w: 8, h: 1 }, { x0: 0, y0: 1, w: 8, h: 1 }], // rows side by side
  ];
  for (const [a, b] of cases) {
    it(`boxes ${a.w}x${a.h}@(${a.x0},${a.y0}) and ${b.w}x${b.h}@(${b.x0},${b.y0}): the direct double sum, both ways`, () => {
      const dx = 0.36, dy = 0.42;
      const am = randomMaps(a, r), bm = randomMaps(b, r);
      const { px, py } = pairGridSize(a, b);
      // Grids up to twice the size asked: a smaller grid on larger shared buffers.
      const plan = pairGrid(createPairGrids(2 * px, 2 * py), px, py);
      const sa = boxSpectra(am, a, plan), sb = boxSpectra(bm, b, plan);
      for (const [src, ss, sm, tgt, ts, tm] of [[a, sa, am, b, sb, bm], [b, sb, bm, a, sa, am]] as const) {
        const want = bruteBracket(src, sm, tgt, tm, dx, dy);
        const got = boxPairSum(src, ss, tgt, ts, plan, dx, dy);
        // Rounding of the transforms: 1e-12 of the sum of the terms' magnitudes is far above it.
        let mag = 0;
        for (let i = 0; i < tm.bn.length; i++) mag += Math.abs(tm.bn[i]) + Math.abs(tm.fx[i]) + Math.abs(tm.fy[i]);
        expect(Math.abs(got - want)).toBeLessThan(1e-12 * Math.abs(want) + 1e-13 * mag * 1e8);
        expect(Math.abs(got - want) / Math.abs(want)).toBeLessThan(1e-10);
      }
    });
  }

  it('spectra in the grids\' memory: the SIMD spectral loop gives the plain loop\'s pair sums bit for bit, odd block widths included', () => {
    const dx = 0.36, dy = 0.42;
    // Grids lent on a kernel's stretch, with room after their buffers for the spectra.
    const kernel = createFluxKernel({ nx: 64, ny: 64, dx, dy }, { scratchBytes: 4 << 20, simd: true });
    let compared = 0;
    for (const [a, b] of cases) {
      const am = randomMaps(a, r), bm = randomMaps(b, r);
      const { px, py } = pairGridSize(a, b);
      const grids = createPairGrids(px, py, { kernel });
      const g = pairGrid(grids, px, py);
      if (!g.simdSums) continue; // no WebAssembly SIMD here: only the plain loop runs
      const space = spectraSpace(grids);
      const simdA = boxSpectra(am, a, g, space), simdB = boxSpectra(bm, b, g, space);
      expect(simdB.im[2].buffer === g.simdSums.room.buffer).toBe(true);
      const plainA = boxSpectra(am, a, g), plainB = boxSpectra(bm, b, g);
      expect(plainA.re[0].buffer === g.simdSums.room.buffer).toBe(false);
      expect(boxPairSum(a, simdA, b, simdB, g, dx, dy)).toBe(boxPairSum(a, plainA, b, plainB, g, dx, dy));
      expect(boxPairSum(b, simdB, a, simdA, g, dx, dy)).toBe(boxPairSum(b, plainB, a, plainA, g, dx, dy));
      compared++;
    }
    expect(compared).toBe(cases.length);
    // A space without room gives plain arrays.
    const tiny = createPairGrids(2, 2);
    const none = spectraSpace(tiny);
    expect(none.alloc(1 << 20)).toBeUndefined();
  });

  it('the TypeScript butterflies give the SIMD kernels\' sums bit for bit', () => {
    const [a, b] = cases[1];
    const am = randomMaps(a, r), bm = randomMaps(b, r);
    const { px, py } = pairGridSize(a, b);
    const sums = [true, false].map((simd) => {
      const g = pairGrid(createPairGrids(px, py, { simd }), px, py);
      return boxPairSum(a, boxSpectra(am, a, g), b, boxSpectra(bm, b, g), g, 0.36, 0.36);
    });
    expect(Object.is(sums[0], sums[1])).toBe(true);
  });

  it('a grid smaller than the two boxes need is refused', () => {
    const a = { x0: 0, y0: 0, w: 5, h: 5 }, b = { x0: 20, y0: 0, w: 5, h: 5 };
    const plan = pairGrid(createPairGrids(8, 16), 8, 16);
    const s = boxSpectra(randomMaps(a, r), a, plan);
    expect(() => boxPairSum(a, s, b, s, plan, 1, 1)).toThrow(/too small/);
  });
});

describe('label split rows by box pair sums', () => {
  // Six compact footpoints of a 150 x 120 frame, their boxes overlapping in places; every
  // footpoint gets its own row (forced), or only the largest four (pairs among the rest unknown).
  const nx = 150, ny = 120, d = 0.36;
  const r = seededRandom(11);
  const n = nx * ny;
  const bn = Float64Array.from({ length: n }, () => 30 * (r() - 0.5));
  const vx = Float64Array.from({ length: n }, () => 0.3 * (r() - 0.5));
  const vy = Float64Array.from({ length: n }, () => 0.3 * (r() - 0.5));
  const labels = new Int32Array(n);
  const blobs = [[80, 80, 30], [20, 20, 9], [60, 30, 12], [70, 38, 7], [120, 90, 10], [30, 95, 6], [100, 15, 5]];
  blobs.forEach(([cx, cy, rad], j) => {
    for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
      const i = y * nx + x, q = ((x - cx) ** 2 + (y - cy) ** 2) / rad ** 2;
      if (q < 1 && labels[i] === 0) { labels[i] = 10 + j; bn[i] = (j % 2 ? -1 : 1) * (1200 - 900 * q); }
    }
  });
  const frame = { time: 0, nx, ny, dx: d, dy: d, bn, vx, vy };
  const kernel = createFluxKernel(frame);
  const t = fluxTransport(frame);
  const K = blobs.length;
  for (const maxFullRows of [K, 4]) {
    it(`${maxFullRows} rows: spins, orbits and totals equal the whole-grid rows'`, () => {
      const opts = { directPairsPerPaddedPixel: 0, maxFullRows };
      const grid = splitByLabels(kernel, t, labels, { ...opts, rows: 'grid' });
      const boxes = splitByLabels(kernel, t, labels, { ...opts, rows: 'boxes' });
      // Box rows do not count against maxFullRows: every pair is known.
      expect(grid.pairsComplete).toBe(maxFullRows === K);
      expect(boxes.pairsComplete).toBe(true);
      const scale = Math.abs(grid.spinTotal) + Math.abs(grid.orbitTotal) + Math.abs(grid.total);
      for (let j = 0; j < K; j++) expect(Math.abs(boxes.spin[j] - grid.spin[j]) / scale).toBeLessThan(1e-12);
      for (let j = 0; j < K * K; j++) {
        if (Number.isNaN(grid.orbit[j])) { expect(Number.isFinite(boxes.orbit[j])).toBe(true); continue; }
        expect(Math.abs(boxes.orbit[j] - grid.orbit[j]) / scale).toBeLessThan(1e-12);
      }
      expect(Math.abs(boxes.orbitTotal - grid.orbitTotal) / scale).toBeLessThan(1e-12);
      expect(Math.abs(boxes.background - grid.background) / scale).toBeLessThan(1e-12);
      // And the orbits are not all negligible: the test compares values that matter.
      expect(Math.max(...Array.from(grid.orbit).filter(Number.isFinite).map(Math.abs)) / scale).toBeGreaterThan(1e-4);
    });
  }

  it('auto: the large footpoint row over the whole grid, the small ones by box pairs, the pairs between them taken once', () => {
    const opts = { directPairsPerPaddedPixel: 0, maxFullRows: K };
    const part = splitPart(kernel, t, labels, opts, { part: 0, of: 1 });
    const large = part.ids.indexOf(10); // first: it would own its pairs with all the others
    expect(part.hasRow.every((v) => v === 1)).toBe(true);
    expect(part.byBoxes[large]).toBe(0);
    expect(part.byBoxes.reduce((c, v) => c + v, 0)).toBe(K - 1);
    const grid = splitByLabels(kernel, t, labels, { ...opts, rows: 'grid' });
    const auto = joinSplitParts([part], grid.total);
    const scale = Math.abs(grid.spinTotal) + Math.abs(grid.orbitTotal) + Math.abs(grid.total);
    for (let j = 0; j < K * K; j++) expect(Math.abs(auto.orbit[j] - grid.orbit[j]) / scale).toBeLessThan(1e-12);
    expect(Math.abs(auto.background - grid.background) / scale).toBeLessThan(1e-12);
  });
});
