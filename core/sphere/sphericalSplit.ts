// The exact split of the spherical helicity-flux double sum by a label map, as in the plane
// (core/labelSplit.ts; Longcope, Ravindra & Barnes 2007): pixel pairs inside one footpoint and each
// of its pixels' own spin are its spin, pairs in two footpoints are their orbit, pairs touching an
// unlabelled pixel are background (the remainder, so spin + orbit + background = total to rounding).
//
// The ordered pair weight w(x <- x') = -2 B_r u . (r^ x grad_s G(x, x')) B_r' dS dS' is not
// symmetric on its own; a pair of footpoints gets both orders, w(a <- b) + w(b <- a), and each
// footpoint's field is made once by the row-pair convolutions (core/sphere/potentialGradient.ts),
// all footpoints in one pass over the row pairs. Unlike the plane the return flux of each
// footpoint is spread over the whole sphere, and self and mutual terms do not separate the same
// way: a footpoint carried round the sphere turns mutual helicity into its own (docs/sphere.md).

import type { LabelSplit } from '../labelSplit.js';
import { pixelSpinRate } from './pixelSpin.js';
import type { PotentialGradient } from './potentialGradient.js';
import { potentialGradients } from './potentialGradient.js';
import { rateFromGradient } from './sphericalHelicityFlux.js';
import type { SphericalGrid } from './sphericalGrid.js';
import type { SphericalTransport } from './sphericalTransport.js';

/**
 * The same figures as the planar split (core/labelSplit.ts): ids, spin per footpoint (on the sphere
 * with its pixels' own spin when the pair sums are used), orbit per pair (K*K), totals, background.
 */
export type SphericalSplit = Pick<LabelSplit, 'ids' | 'spin' | 'orbit' | 'spinTotal' | 'orbitTotal' | 'background' | 'total'>;

export interface SphericalSplitOptions {
  /** The total when already computed with the same velocity (saves its convolution). */
  readonly total?: number;
  /** Pixel spin, rad/s, when already computed. */
  readonly spin?: Float64Array;
  /** How the footpoints' fields are made (default the exact pair sums; spherical harmonics for a whole Sun). */
  readonly gradients?: (grid: SphericalGrid, sources: readonly ArrayLike<number>[]) => PotentialGradient[];
  /** Add each pixel's own spin (default true; false with spherical harmonics). */
  readonly pixelSpin?: boolean;
}

/** Spin, orbit and background of the rate of `t` for footpoints `labels` (0 = none). */
export function splitSphericalByLabels(
  grid: SphericalGrid, t: SphericalTransport, labels: Int32Array, options: SphericalSplitOptions = {},
): SphericalSplit {
  const n = grid.nx * grid.ny;
  if (labels.length !== n) throw new RangeError(`labels has ${labels.length} values, expected ${n}`);
  const idSet = new Set<number>();
  for (let i = 0; i < n; i++) if (t.valid[i] && labels[i] > 0) idSet.add(labels[i]);
  const ids = [...idSet].sort((a, b) => a - b);
  const k = ids.length;
  const index = new Map<number, number>();
  ids.forEach((id, j) => index.set(id, j));
  const sources = ids.map(() => new Float64Array(n));
  for (let i = 0; i < n; i++) if (t.valid[i] && labels[i] > 0) sources[index.get(labels[i])!][i] = t.bn[i];
  const withTotal = options.total === undefined;
  const grads: PotentialGradient[] = (options.gradients ?? potentialGradients)(grid, withTotal ? [...sources, t.bn] : sources);
  const spinRate = options.pixelSpin === false ? new Float64Array(n) : options.spin ?? pixelSpinRate(grid, t.ue, t.un, t.valid);
  const total = withTotal ? rateFromGradient(grid, t, grads[k], t.ue, t.un, spinRate).total : options.total!;
  // T[b][a]: the rate at footpoint b's pixels from footpoint a's field.
  const per = { pairs: new Float64Array(n), self: new Float64Array(n) };
  const zero = new Float64Array(n);
  const tt = new Float64Array(k * k);
  const own = new Float64Array(k);
  for (let a = 0; a < k; a++) {
    per.pairs.fill(0);
    rateFromGradient(grid, t, grads[a], t.ue, t.un, zero, per);
    for (let i = 0; i < n; i++) {
      if (!t.valid[i] || labels[i] <= 0) continue;
      tt[index.get(labels[i])! * k + a] += per.pairs[i];
    }
  }
  // Each pixel's own spin goes to its footpoint.
  rateFromGradient(grid, t, grads[0] ?? { ge: zero, gn: zero }, zero, zero, spinRate, per);
  for (let i = 0; i < n; i++) if (t.valid[i] && labels[i] > 0) own[index.get(labels[i])!] += per.self[i];
  const spin = new Float64Array(k), orbit = new Float64Array(k * k);
  let spinTotal = 0, orbitTotal = 0;
  for (let a = 0; a < k; a++) {
    spin[a] = tt[a * k + a] + own[a];
    spinTotal += spin[a];
    for (let b = a + 1; b < k; b++) {
      const v = tt[a * k + b] + tt[b * k + a];
      orbit[a * k + b] = v; orbit[b * k + a] = v;
      orbitTotal += v;
    }
  }
  return { ids, spin, orbit, spinTotal, orbitTotal, background: total - spinTotal - orbitTotal, total };
}
