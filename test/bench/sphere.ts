// The helicity flux on the sphere (docs/sphere.md): a 360 x 180 whole-Sun map and a 30-degree
// patch, timed with CPU time and load beside wall time; the exact row-pair engine against a
// spherical-harmonic transform of our own (written here as the peer it was chosen over: the same
// Green's function as a series truncated at degree L = ny - 1), for speed and accuracy; and the
// planar error against patch size. Scenes are invented bipoles.
import { cpus, loadavg } from 'node:os';
import { CARRINGTON_SIDEREAL_MICRORAD_S, HOWARD_1990_SIDEREAL, differentialRotationShare, rotationMotion } from '../../core/sphere/differentialRotation.js';
import { comparePatch, rowPairWork } from '../../core/sphere/patchOnSphere.js';
import type { PotentialGradient } from '../../core/sphere/potentialGradient.js';
import { potentialGradients } from '../../core/sphere/potentialGradient.js';
import { rateFromGradient, sphericalHelicityFlux } from '../../core/sphere/sphericalHelicityFlux.js';
import type { SphericalGrid } from '../../core/sphere/sphericalGrid.js';
import { splitSphericalByLabels } from '../../core/sphere/sphericalSplit.js';
import { sphericalTransport } from '../../core/sphere/sphericalTransport.js';
import { patchGrid, patchScene, spotScene, wholeSunGrid } from '../core/sphereScenes.js';

function timed<T>(fn: () => T): { value: T; wallMs: number; cpuMs: number } {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const value = fn();
  const wallMs = performance.now() - t0;
  const c = process.cpuUsage(c0);
  return { value, wallMs, cpuMs: (c.user + c.system) / 1000 };
}
const load = () => `load ${loadavg()[0].toFixed(2)} on ${cpus().length} cores`;

/**
 * grad_s psi by a spherical-harmonic series truncated at degree L (orthonormal associated Legendre
 * functions by the standard three-term recurrence; longitudes by direct DFT): the exact discrete
 * projection of B onto Y_lm, psi_lm = -a_lm / (l (l + 1)), and the gradient synthesised at the pixel
 * centres. It sums the same pixel pairs as the engine with the kernel's series cut at L.
 */
export function harmonicGradient(grid: SphericalGrid, b: ArrayLike<number>, L: number): PotentialGradient {
  const { nx, ny, colLon, rowLat, rowAreaMm2, radiusMm } = grid;
  const M = Math.min(L, Math.floor(nx / 2));
  const cosT = new Float64Array(nx * (M + 1)), sinT = new Float64Array(nx * (M + 1));
  for (let m = 0; m <= M; m++) for (let k = 0; k < nx; k++) { cosT[m * nx + k] = Math.cos(m * colLon[k]); sinT[m * nx + k] = Math.sin(m * colLon[k]); }
  // Legendre functions per row: P[(l, m)] at x = sin(lat), index m * (L + 1) + l.
  const size = (M + 1) * (L + 1);
  const P = new Float64Array(ny * size), dP = new Float64Array(ny * size);
  for (let r = 0; r < ny; r++) {
    const x = Math.sin(rowLat[r]), s = Math.cos(rowLat[r]);
    const o = r * size;
    let pmm = 1 / Math.sqrt(4 * Math.PI);
    for (let m = 0; m <= M; m++) {
      if (m > 0) pmm *= -Math.sqrt((2 * m + 1) / (2 * m)) * s;
      P[o + m * (L + 1) + m] = pmm;
      if (m + 1 <= L) P[o + m * (L + 1) + m + 1] = Math.sqrt(2 * m + 3) * x * pmm;
      for (let l = m + 2; l <= L; l++) {
        const a = Math.sqrt((4 * l * l - 1) / (l * l - m * m));
        const a1 = Math.sqrt((4 * (l - 1) * (l - 1) - 1) / ((l - 1) * (l - 1) - m * m));
        P[o + m * (L + 1) + l] = a * (x * P[o + m * (L + 1) + l - 1] - P[o + m * (L + 1) + l - 2] / a1);
      }
      // d/d(lat) = -d/d(colatitude): dP_l^m/dcolat = [l x P_l^m - sqrt((2l+1)(l^2-m^2)/(2l-1)) P_{l-1}^m] / sin(colat).
      for (let l = m; l <= L; l++) {
        const prev = l - 1 >= m ? P[o + m * (L + 1) + l - 1] : 0;
        const dcol = (l * x * P[o + m * (L + 1) + l] - Math.sqrt(((2 * l + 1) * (l * l - m * m)) / (2 * l - 1)) * prev) / s;
        dP[o + m * (L + 1) + l] = -dcol;
      }
    }
  }
  // Analysis: a_lm = Sum_r P_lm(r) Sum_k B S e^{-i m phi}.
  const ar = new Float64Array(size), ai = new Float64Array(size);
  for (let r = 0; r < ny; r++) {
    for (let m = 0; m <= M; m++) {
      let cr = 0, ci = 0;
      for (let k = 0; k < nx; k++) { const v = b[r * nx + k] * rowAreaMm2[r]; cr += v * cosT[m * nx + k]; ci -= v * sinT[m * nx + k]; }
      const o = r * size + m * (L + 1);
      for (let l = Math.max(m, 1); l <= L; l++) { ar[m * (L + 1) + l] += P[o + l] * cr; ai[m * (L + 1) + l] += P[o + l] * ci; }
    }
  }
  for (let m = 0; m <= M; m++) for (let l = Math.max(m, 1); l <= L; l++) { const f = -1 / (l * (l + 1)); ar[m * (L + 1) + l] *= f; ai[m * (L + 1) + l] *= f; }
  ar[0] = 0; ai[0] = 0;
  // Synthesis of d psi / d phi and d psi / d lat.
  const ge = new Float64Array(nx * ny), gn = new Float64Array(nx * ny);
  const scale = 1e8 / radiusMm;
  for (let r = 0; r < ny; r++) {
    const o = r * size;
    for (let m = 0; m <= M; m++) {
      let pr = 0, pi = 0, qr = 0, qi = 0;
      for (let l = Math.max(m, 1); l <= L; l++) {
        const c = m * (L + 1) + l;
        pr += ar[c] * P[o + c]; pi += ai[c] * P[o + c];
        qr += ar[c] * dP[o + c]; qi += ai[c] * dP[o + c];
      }
      const w = m === 0 ? 1 : 2;
      for (let k = 0; k < nx; k++) {
        const cs = cosT[m * nx + k], sn = sinT[m * nx + k];
        // Re[(i m)(pr + i pi) e^{i m phi}] and Re[(qr + i qi) e^{i m phi}].
        ge[r * nx + k] += w * m * (-pr * sn - pi * cs);
        gn[r * nx + k] += w * (qr * cs - qi * sn);
      }
    }
    const c = scale / Math.cos(rowLat[r]);
    for (let k = 0; k < nx; k++) { ge[r * nx + k] *= c; gn[r * nx + k] *= scale; }
  }
  return { ge, gn };
}

const sunSpots = [
  { lonDeg: 60, latDeg: 17, peak: 1200, sigmaDeg: 2.5, label: 1, omega: 1.5e-6 }, { lonDeg: 68, latDeg: 13, peak: -1100, sigmaDeg: 3, label: 2 },
  { lonDeg: 140, latDeg: -22, peak: -900, sigmaDeg: 3.5, label: 3 }, { lonDeg: 151, latDeg: -18, peak: 950, sigmaDeg: 3, label: 4 },
  { lonDeg: 230, latDeg: 28, peak: 700, sigmaDeg: 4, label: 5 }, { lonDeg: 242, latDeg: 24, peak: -650, sigmaDeg: 4.5, label: 6 },
  { lonDeg: 300, latDeg: -8, peak: -800, sigmaDeg: 2, label: 7, omega: -2e-6 }, { lonDeg: 306, latDeg: -12, peak: 820, sigmaDeg: 2.5, label: 8 },
];

export async function bench(): Promise<void> {
  // Whole Sun, 360 x 180 Carrington CAR, flux-balanced, moved by the Howard profile in Carrington's frame plus two turning spots.
  const g = timed(() => wholeSunGrid(180));
  const grid = g.value;
  const sc = spotScene(grid, sunSpots, true);
  const rot = rotationMotion(grid, HOWARD_1990_SIDEREAL, CARRINGTON_SIDEREAL_MICRORAD_S);
  const vx = sc.vx.map((v, i) => v + rot.vx[i]);
  const t = sphericalTransport(grid, sc.bn, vx, sc.vy);
  console.log(`whole Sun 360 x 180 (${load()}): grid with astropy-checked coordinates ${g.wallMs.toFixed(0)} ms wall`);
  const flux = timed(() => sphericalHelicityFlux(grid, t));
  const dr = timed(() => differentialRotationShare(grid, t, flux.value.gradient));
  const split = timed(() => splitSphericalByLabels(grid, t, sc.labels, { total: flux.value.total }));
  console.log(`  rate, density and A_p (exact row-pair sums): ${flux.wallMs.toFixed(0)} ms wall, ${flux.cpuMs.toFixed(0)} ms CPU; total ${flux.value.total.toExponential(4)} Mx^2/s (pairs ${flux.value.pairs.toExponential(3)}, pixels' own spin ${flux.value.selfPixel.toExponential(3)})`);
  console.log(`  differential-rotation share (reuses the potential): ${dr.wallMs.toFixed(1)} ms wall; ${dr.value.total.toExponential(4)} Mx^2/s, own motions ${(flux.value.total - dr.value.total).toExponential(4)}`);
  console.log(`  label split, ${split.value.ids.length} footpoints: ${split.wallMs.toFixed(0)} ms wall, ${split.cpuMs.toFixed(0)} ms CPU; spin ${split.value.spinTotal.toExponential(3)}, orbit ${split.value.orbitTotal.toExponential(3)}, background ${split.value.background.toExponential(3)}`);
  // Rigid rotation of the same balanced Sun.
  const rigid = { a: 2.894, b: 0, c: 0 };
  const rig = differentialRotationShare(grid, t, flux.value.gradient, rigid, 0);
  const rigidMotion = rotationMotion(grid, rigid, 0);
  const rigidFd = sphericalHelicityFlux(grid, sphericalTransport(grid, sc.bn, rigidMotion.vx, rigidMotion.vy), flux.value.gradient);
  const share0 = differentialRotationShare(grid, t, flux.value.gradient, HOWARD_1990_SIDEREAL, 0);
  console.log(`  rigid rotation at 2.894 microrad/s / differential share: ${(rig.total / share0.total).toExponential(2)} (analytic pixel spin), ${(rigidFd.total / share0.total).toExponential(2)} (pixel spin by finite differences), ${(rig.pairs / share0.total).toExponential(2)} (pixel pairs alone)`);

  // The peer: a spherical-harmonic series truncated at L = ny - 1.
  for (const L of [179]) {
    const sh = timed(() => harmonicGradient(grid, t.bn, L));
    const spin = new Float64Array(grid.nx * grid.ny);
    const shPairs = rateFromGradient(grid, t, sh.value, t.ue, t.un, spin).pairs;
    const shDr = differentialRotationShare(grid, t, sh.value);
    const shRigid = differentialRotationShare(grid, t, sh.value, rigid, 0);
    const shShare0 = differentialRotationShare(grid, t, sh.value, HOWARD_1990_SIDEREAL, 0);
    console.log(`  spherical harmonics to L = ${L} (own transform): ${sh.wallMs.toFixed(0)} ms wall, ${sh.cpuMs.toFixed(0)} ms CPU; pair sum off the exact by ${((shPairs - flux.value.pairs) / Math.abs(flux.value.pairs)).toExponential(2)}, differential share by ${((shDr.total - dr.value.total) / Math.abs(dr.value.total)).toExponential(2)}; rigid rotation / differential share ${(shRigid.total / shShare0.total).toExponential(2)} (${(shRigid.pairs / shShare0.total).toExponential(2)} without the pixels' own spin)`);
  }

  // A 30-degree patch: 0.03-degree pixels (1000 x 1000, an HMI-like remapped patch) and 0.12-degree ones (250 x 250).
  for (const n of [250, 1000]) {
    const pg = patchGrid(150, 20, 30, n, 'CEA', true);
    const ps = patchScene(pg, 'orbit', 150, 20, 30);
    const pt = sphericalTransport(pg, ps.bn, ps.vx, ps.vy);
    const c = timed(() => comparePatch(pg, pt));
    console.log(`30-degree oblique CEA patch ${n} x ${n} (row-pair work ${rowPairWork(n, n).toExponential(1)}; ${load()}): planar + spherical ${c.wallMs.toFixed(0)} ms wall, ${c.cpuMs.toFixed(0)} ms CPU, spherical sum on ${c.value.coarsening} x ${c.value.coarsening} blocks; planar departure ${c.value.planarDeparture.toExponential(2)}`);
  }

  // Planar error against patch size.
  console.log('planar error (planar - spherical) / |spherical| of the pixel-pair sum, patches centred at latitude 20, 96 x 96 pixels:');
  console.log('  grid                      scene      2 deg      10 deg     30 deg');
  for (const [proj, oblique, name] of [['CEA', true, 'oblique CEA (native eq.)'], ['CAR', false, 'CAR, rows on parallels  ']] as const) {
    for (const kind of ['orbit', 'spin', 'rotation'] as const) {
      const cells = [2, 10, 30].map((size) => {
        const pg = patchGrid(150, 20, size, 96, proj, oblique);
        const ps = patchScene(pg, kind, 150, 20, size);
        return comparePatch(pg, sphericalTransport(pg, ps.bn, ps.vx, ps.vy)).planarDeparture.toExponential(1).padStart(9);
      });
      console.log(`  ${name}  ${kind.padEnd(9)} ${cells.join('  ')}`);
    }
  }
}
