// The rate at which each pixel turns about the local vertical, omega = (1/2) (curl u) . r^, rad/s,
// by central differences in the native coordinates of a spherical grid (one-sided at an edge or a
// pixel without data; the longitude wraps round on a whole-Sun map):
//
//   (curl u) . r^ = (1 / (R cos th)) [ d u_N / d phi - d (u_E cos th) / d th ].
//
// The pixel-pair sums of the helicity flux leave out each pixel with itself; a pixel whose flux
// Phi turns rigidly at omega holds -(omega / 2 pi) Phi^2 of its own (the spin of any shape turning
// rigidly; Longcope, Ravindra & Barnes 2007), which this rate gives back (docs/sphere.md).

import { KM_PER_MM } from '../units.js';
import type { SphericalGrid } from './sphericalGrid.js';

export function pixelSpinRate(grid: SphericalGrid, ue: ArrayLike<number>, un: ArrayLike<number>, valid: ArrayLike<number>): Float64Array {
  const { nx, ny, colLon, rowLat, radiusMm, wholeSun } = grid;
  const out = new Float64Array(nx * ny);
  const cosT = rowLat.map(Math.cos);
  const step = nx > 1 ? colLon[1] - colLon[0] : 1;
  for (let r = 0; r < ny; r++) {
    for (let k = 0; k < nx; k++) {
      const i = r * nx + k;
      if (!valid[i]) continue;
      // d u_N / d phi
      let kl = k - 1, kr = k + 1;
      if (wholeSun) { kl = (kl + nx) % nx; kr = kr % nx; }
      const okL = kl >= 0 && valid[r * nx + kl] === 1, okR = kr < nx && valid[r * nx + kr] === 1;
      let dPhi = 0;
      if (okL && okR) dPhi = (un[r * nx + kr] - un[r * nx + kl]) / (2 * step);
      else if (okR) dPhi = (un[r * nx + kr] - un[i]) / step;
      else if (okL) dPhi = (un[i] - un[r * nx + kl]) / step;
      // d (u_E cos th) / d th
      const rd = r - 1, ru = r + 1;
      const okD = rd >= 0 && valid[rd * nx + k] === 1, okU = ru < ny && valid[ru * nx + k] === 1;
      const f = (row: number) => ue[row * nx + k] * cosT[row];
      let dTh = 0;
      if (okD && okU) dTh = (f(ru) - f(rd)) / (rowLat[ru] - rowLat[rd]);
      else if (okU) dTh = (f(ru) - f(r)) / (rowLat[ru] - rowLat[r]);
      else if (okD) dTh = (f(r) - f(rd)) / (rowLat[r] - rowLat[rd]);
      out[i] = (dPhi - dTh) / (2 * radiusMm * KM_PER_MM * cosT[r]);
    }
  }
  return out;
}
