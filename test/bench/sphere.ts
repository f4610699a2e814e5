// The helicity flux on the sphere (docs/sphere.md): a 360 x 180 whole-Sun map and a 30-degree
// patch, timed with CPU time and load beside wall time; the exact row-pair engine against a
// spherical-harmonic transform of our own (core/sphere/sphericalHarmonics.ts: the same Green's
// function as a series cut at degree L = ny - 1), for speed and accuracy; and the
// planar error against patch size. Scenes are invented bipoles.
import { cpus, loadavg } from 'node:os';
import { CARRINGTON_SIDEREAL_MICRORAD_S, HOWARD_1990_SIDEREAL, differentialRotationShare, rotationMotion } from '../../core/sphere/differentialRotation.js';
import { comparePatch, rowPairWork } from '../../core/sphere/patchOnSphere.js';
import { potentialGradients } from '../../core/sphere/potentialGradient.js';
import { rateFromGradient, sphericalHelicityFlux } from '../../core/sphere/sphericalHelicityFlux.js';
import { splitSphericalByLabels } from '../../core/sphere/sphericalSplit.js';
import { harmonicGradients } from '../../core/sphere/sphericalHarmonics.js';
import { measureSphere } from '../../core/sphere/measureSphere.js';
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

  // The other engine: a spherical-harmonic series to L = ny - 1 (core/sphere/sphericalHarmonics.ts), without pixels' own spin.
  for (const L of [179]) {
    const sh = timed(() => harmonicGradients(grid, [t.bn], L)[0]);
    const spin = new Float64Array(grid.nx * grid.ny);
    const shPairs = rateFromGradient(grid, t, sh.value, t.ue, t.un, spin).pairs;
    const shDr = differentialRotationShare(grid, t, sh.value, undefined, undefined, false);
    const shRigid = differentialRotationShare(grid, t, sh.value, rigid, 0, false);
    const shShare0 = differentialRotationShare(grid, t, sh.value, HOWARD_1990_SIDEREAL, 0, false);
    console.log(`  spherical harmonics to L = ${L} (own transform): ${sh.wallMs.toFixed(0)} ms wall, ${sh.cpuMs.toFixed(0)} ms CPU; rate off the pair sums' by ${((shPairs - flux.value.total) / Math.abs(flux.value.total)).toExponential(2)}, differential share by ${((shDr.total - dr.value.total) / Math.abs(dr.value.total)).toExponential(2)}; rigid rotation / differential share ${(shRigid.total / shShare0.total).toExponential(2)}`);
  }

  // One whole-Sun sample as the pipeline takes it (core/sphere/measureSphere.ts, default engine: harmonics), with the split and the noise sigma.
  const ms = timed(() => measureSphere(grid, { bn: sc.bn, vx, vy: sc.vy, labels: sc.labels }, { noiseG: 10 }));
  console.log(`  measureSphere (harmonics, 8 footpoints, noise sigma): ${ms.wallMs.toFixed(0)} ms wall, ${ms.cpuMs.toFixed(0)} ms CPU; total ${ms.value.total.toExponential(4)} +- ${ms.value.sigmaTotal.toExponential(2)}, rotation ${ms.value.rotation.toExponential(4)}, north ${ms.value.north!.toExponential(3)}, south ${ms.value.south!.toExponential(3)}`);

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
