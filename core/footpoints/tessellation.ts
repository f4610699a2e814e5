// Downhill-gradient tessellation (Welsch & Longcope 2003): every pixel above threshold follows
// the steepest ascent of |bn| through pixels of its own polarity until it reaches a local maximum;
// pixels that reach the same maximum form one region. Noise makes spurious maxima, so neighbouring
// regions are then merged when the saddle between them is shallow: the lower of the two peaks
// stands less than `saddleDepth` above the highest point of their common boundary. One body with
// several cores (umbral cores inside one penumbra) is merged too: the saddle stands at least
// `saddleRatio` of the lower peak, i.e. the cores overlap above half their height. Regions too
// small in area or flux join the neighbour they share the highest saddle with, or are dropped.

export interface TessellationOptions {
  /** Pixel sides (any unit, only their ratio matters for the steepest step). */
  readonly dx: number;
  readonly dy: number;
  /** Merge two neighbours when min(peak) - saddle < saddleDepth (same unit as the field). */
  readonly saddleDepth: number;
  /** Merge two neighbours when saddle >= saddleRatio * min(peak) (0 turns this off). */
  readonly saddleRatio?: number;
  /** Smallest region kept, pixels. */
  readonly minPixels: number;
  /** Smallest |flux| kept, in units of the field times pixel count (sum of |field|). */
  readonly minFieldSum: number;
  /** The map whose sum over a region measures its flux (default: the field itself). */
  readonly fluxMap?: ArrayLike<number>;
}

function root(parent: Int32Array, i: number): number {
  while (parent[i] !== i) {
    parent[i] = parent[parent[i]];
    i = parent[i];
  }
  return i;
}

/**
 * Tessellates the pixels where `strength` > 0 (strength = polarity * field, so one call per
 * polarity, or both at once when `classes` separates them). Returns labels 1..count in raster
 * order of each region's first pixel.
 */
export function downhillTessellation(
  strength: Float64Array, classes: Int8Array, nx: number, ny: number, options: TessellationOptions,
): { labels: Int32Array; count: number } {
  const n = nx * ny;
  const { dx, dy } = options;
  const diag = Math.hypot(dx, dy);
  const offX = [-1, 0, 1, -1, 1, -1, 0, 1];
  const offY = [-1, -1, -1, 0, 0, 1, 1, 1];
  const dist = offX.map((ox, k) => (ox !== 0 && offY[k] !== 0 ? diag : ox !== 0 ? dx : dy));
  // Step 1: each pixel points to its steepest uphill neighbour of the same class (ties by index,
  // a total order, so no cycles), or to itself at a maximum.
  const next = new Int32Array(n).fill(-1);
  for (let y = 0; y < ny; y++) {
    for (let x = 0; x < nx; x++) {
      const i = y * nx + x;
      const c = classes[i];
      if (c === 0) continue;
      const f = strength[i];
      let best = i, bestSlope = 0;
      for (let k = 0; k < 8; k++) {
        const xx = x + offX[k], yy = y + offY[k];
        if (xx < 0 || yy < 0 || xx >= nx || yy >= ny) continue;
        const j = yy * nx + xx;
        if (classes[j] !== c) continue;
        const g = strength[j] - f;
        if (g < 0 || (g === 0 && j < i)) continue;
        const slope = g / dist[k];
        if (best === i || slope > bestSlope || (slope === bestSlope && j > best)) {
          best = j;
          bestSlope = slope;
        }
      }
      next[i] = best;
    }
  }
  // Step 2: follow the pointers to the maximum, compressing paths; basins get provisional ids.
  const basin = new Int32Array(n).fill(-1);
  const peakOf: number[] = [];
  const stack: number[] = [];
  for (let i = 0; i < n; i++) {
    if (next[i] < 0 || basin[i] >= 0) continue;
    let j = i;
    while (basin[j] < 0 && next[j] !== j) {
      stack.push(j);
      j = next[j];
    }
    if (basin[j] < 0) {
      basin[j] = peakOf.length;
      peakOf.push(j);
    }
    const b = basin[j];
    while (stack.length) basin[stack.pop()!] = b;
  }
  const m = peakOf.length;
  const peak = new Float64Array(m);
  for (let b = 0; b < m; b++) peak[b] = strength[peakOf[b]];
  const pixels = new Float64Array(m);
  const fluxSum = new Float64Array(m);
  const fluxMap = options.fluxMap ?? strength;
  for (let i = 0; i < n; i++) {
    const b = basin[i];
    if (b < 0) continue;
    pixels[b]++;
    const v = fluxMap[i];
    if (Number.isFinite(v)) fluxSum[b] += Math.abs(v);
  }
  // Step 3: saddles between neighbouring basins: the highest min(f_i, f_j) over touching pixel pairs.
  const saddles = new Map<number, number>();
  for (let y = 0; y < ny; y++) {
    for (let x = 0; x < nx; x++) {
      const i = y * nx + x;
      const a = basin[i];
      if (a < 0) continue;
      // Forward half of the 8-neighbourhood visits every touching pair once.
      for (let k = 4; k < 8; k++) {
        const xx = x + offX[k], yy = y + offY[k];
        if (xx < 0 || yy < 0 || xx >= nx || yy >= ny) continue;
        const j = yy * nx + xx;
        const b = basin[j];
        if (b < 0 || b === a || classes[j] !== classes[i]) continue;
        const s = Math.min(strength[i], strength[j]);
        const key = a < b ? a * m + b : b * m + a;
        const old = saddles.get(key);
        if (old === undefined || s > old) saddles.set(key, s);
      }
    }
  }
  const edges = [...saddles.entries()].map(([key, s]) => ({ a: Math.floor(key / m), b: key % m, s }));
  edges.sort((p, q) => q.s - p.s);
  const parent = new Int32Array(m);
  for (let b = 0; b < m; b++) parent[b] = b;
  const union = (ra: number, rb: number) => {
    const [keep, gone] = ra < rb ? [ra, rb] : [rb, ra];
    parent[gone] = keep;
    peak[keep] = Math.max(peak[keep], peak[gone]);
    pixels[keep] += pixels[gone];
    fluxSum[keep] += fluxSum[gone];
  };
  const ratio = options.saddleRatio && options.saddleRatio > 0 ? options.saddleRatio : Infinity;
  // Highest saddles first: the first edge met between two merged groups is their true saddle.
  for (const { a, b, s } of edges) {
    const ra = root(parent, a), rb = root(parent, b);
    if (ra === rb) continue;
    const lower = Math.min(peak[ra], peak[rb]);
    if (lower - s < options.saddleDepth || s >= ratio * lower) union(ra, rb);
  }
  const small = (r: number) => pixels[r] < options.minPixels || fluxSum[r] < options.minFieldSum;
  for (const { a, b } of edges) {
    const ra = root(parent, a), rb = root(parent, b);
    if (ra !== rb && (small(ra) || small(rb))) union(ra, rb);
  }
  // Step 4: final labels in raster order of first pixel; small isolated regions become background.
  const finalLabel = new Int32Array(m).fill(-1);
  const labels = new Int32Array(n);
  let count = 0;
  for (let i = 0; i < n; i++) {
    const b = basin[i];
    if (b < 0) continue;
    const r = root(parent, b);
    if (finalLabel[r] < 0) finalLabel[r] = small(r) ? 0 : ++count;
    labels[i] = finalLabel[r];
  }
  return { labels, count };
}
