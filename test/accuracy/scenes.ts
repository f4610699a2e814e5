// The accuracy scenes: our own invented parameters, 0.36 Mm pixels, grids of 128 x 128 px. Each
// scene is a list of field objects (test/accuracy/objects.ts) with exact motions; t = 0 is the
// middle of the frame sequence, so a scene looks the same at its mid-time at every cadence.
// Realistic speeds: 0.1 to 1 km/s; rotation 2 to 15 deg/h.

import type { Grid } from '../../core/grid.js';
import type { FieldObject } from './objects.js';
import { RAD_S_PER_DEG_H, source, spot } from './objects.js';

/** Which of the issue's targets a scene belongs to. */
export type TargetKind = 'translating' | 'circling' | 'turning' | 'rigid' | 'emerging' | 'static' | 'other';

export interface Scene {
  readonly name: string;
  readonly description: string;
  readonly grid: Grid;
  readonly objects: readonly FieldObject[];
  /** The frames carry bx, by (runs are made both with and without them). */
  readonly vector: boolean;
  readonly target: TargetKind;
  /**
   * The analytic value that holds for this scene (compact or rigidly moving spots), by the
   * point-footpoint formula -(1/2pi) [Sum_{a != b} Phi_a Phi_b dtheta_ab/dt + Sum_a Phi_a^2 omega_a]
   * (Berger & Field 1984; Pariat, Demoulin & Berger 2005): the name of the case, or undefined.
   */
  readonly analytic?: string;
  /** Objects turning about their own centre whose spin the methods can see (elongated ones). */
  readonly turning?: readonly string[];
}

const D = 0.36; // Mm per pixel
const grid128: Grid = { nx: 128, ny: 128, dx: D, dy: D };
const degH = (v: number) => v * RAD_S_PER_DEG_H;

function translating(speed: number): Scene {
  return {
    name: `translate-${speed}`,
    description: `round + spot passing a static round - spot 20 px away at ${speed} km/s`,
    grid: grid128, vector: false, target: 'translating', analytic: 'compact spots (point formula)',
    objects: [
      spot({ name: 'static-', x: 64, y: 54, peak: -1600, width: 4 }),
      spot({ name: 'moving+', x: 64, y: 74, peak: 1800, width: 3.5, velocity: [speed, 0] }),
    ],
  };
}

function circling(rateDegH: number, separation: number): Scene {
  const r = separation / 2, rate = degH(rateDegH);
  return {
    name: `circle-${rateDegH}dph-${separation}px`,
    description: `opposite round spots ${separation} px apart circling their midpoint at ${rateDegH} deg/h, not turning`,
    grid: grid128, vector: false, target: 'circling', analytic: 'circling pair -(1/pi) Phi1 Phi2 Omega',
    objects: [
      spot({ name: 'a+', x: 64 - r, y: 64, peak: 1800, width: 3.5, orbit: { x: 64, y: 64, rate } }),
      spot({ name: 'b-', x: 64 + r, y: 64, peak: -1500, width: 3, orbit: { x: 64, y: 64, rate } }),
    ],
  };
}

function turningAlone(ratio: number, rateDegH: number): Scene {
  return {
    name: `turn-ar${ratio}-${rateDegH}dph`,
    description: `one elongated + spot (axis ratio ${ratio}) turning in place at ${rateDegH} deg/h, alone`,
    grid: grid128, vector: false, target: 'turning', analytic: 'spinning spot -(omega/2pi) Phi^2',
    objects: [spot({ name: 'turning+', x: 64, y: 64, peak: 1800, width: 5, axisRatio: ratio, angle: 0.4, spin: degH(rateDegH) })],
    turning: ['turning+'],
  };
}

function rigid(ratio: number): Scene {
  const rate = degH(10);
  const o = { x: 64, y: 64, rate };
  return {
    name: ratio === 1 ? 'rigid-round' : `rigid-ar${ratio}`,
    description: `flux-balanced bipole of ${ratio === 1 ? 'round' : `elongated (axis ratio ${ratio})`} spots 30 px apart turning rigidly at 10 deg/h (true total ~0)`,
    grid: grid128, vector: false, target: 'rigid', analytic: 'rigid rotation -(Omega/2pi) Phi_net^2',
    objects: [
      spot({ name: 'a+', x: 49, y: 64, peak: 1800, width: 4, axisRatio: ratio, angle: 1.2, spin: rate, orbit: o }),
      spot({ name: 'b-', x: 79, y: 64, peak: -1800, width: 4, axisRatio: ratio, angle: 1.2, spin: rate, orbit: o }),
    ],
    ...(ratio > 1 && { turning: ['a+', 'b-'] }),
  };
}

export const SCENES: readonly Scene[] = [
  translating(0.1), translating(0.3), translating(1.0),
  circling(2, 40), circling(5, 30), circling(15, 20),
  turningAlone(1.3, 2), turningAlone(1.3, 10), turningAlone(1.8, 5), turningAlone(2.5, 2),
  {
    name: 'turn-among-others',
    description: 'elongated + spot (axis ratio 1.8) turning at 5 deg/h beside a static - spot, a + spot translating at 0.3 km/s and diffuse - flux',
    grid: grid128, vector: false, target: 'turning',
    objects: [
      spot({ name: 'turning+', x: 48, y: 62, peak: 1800, width: 5, axisRatio: 1.8, angle: -0.3, spin: degH(5) }),
      spot({ name: 'static-', x: 84, y: 58, peak: -1700, width: 4 }),
      spot({ name: 'moving+', x: 72, y: 92, peak: 1300, width: 3, velocity: [0.3, 0] }),
      spot({ name: 'diffuse-', x: 66, y: 70, peak: -60, width: 18 }),
    ],
    turning: ['turning+'],
  },
  {
    name: 'turn-and-circle',
    description: 'elongated opposite spots (axis ratios 1.8, 2) 36 px apart circling at 5 deg/h while turning clockwise at 4 and 6 deg/h (spin and orbit add)',
    grid: grid128, vector: false, target: 'turning', analytic: 'circling and spinning spots (point formula)',
    objects: [
      spot({ name: 'a+', x: 46, y: 64, peak: 1800, width: 5, axisRatio: 1.8, angle: 0.5, spin: degH(-4), orbit: { x: 64, y: 64, rate: degH(5) } }),
      spot({ name: 'b-', x: 82, y: 64, peak: -1600, width: 5, axisRatio: 2, angle: -0.7, spin: degH(-6), orbit: { x: 64, y: 64, rate: degH(5) } }),
    ],
    turning: ['a+', 'b-'],
  },
  rigid(1), rigid(1.6),
  {
    name: 'shear-pil',
    description: 'elongated opposite spots (axis ratio 2.5, along the polarity line) 16 px apart sliding past each other at +-0.3 km/s',
    grid: grid128, vector: false, target: 'other',
    objects: [
      spot({ name: 'a+', x: 56, y: 64, peak: 1500, width: 7, axisRatio: 2.5, angle: Math.PI / 2, velocity: [0, 0.3] }),
      spot({ name: 'b-', x: 72, y: 64, peak: -1500, width: 7, axisRatio: 2.5, angle: Math.PI / 2, velocity: [0, -0.3] }),
    ],
  },
  {
    name: 'separating',
    description: 'round opposite spots 20 px apart separating along their axis at +-0.25 km/s and spreading (true total 0 by symmetry)',
    grid: grid128, vector: false, target: 'static',
    objects: [
      spot({ name: 'a+', x: 54, y: 64, peak: 1600, width: 3.5, velocity: [-0.25, 0], growth: 2e-5 }),
      spot({ name: 'b-', x: 74, y: 64, peak: -1600, width: 3.5, velocity: [0.25, 0], growth: 2e-5 }),
    ],
  },
  {
    name: 'diffuse-drift',
    description: 'diffuse - flux (peak -90 G, sigma 10 px, mostly under 50 G) drifting at 0.3 km/s past a static strong + spot',
    grid: grid128, vector: false, target: 'other', analytic: undefined,
    objects: [
      spot({ name: 'strong+', x: 64, y: 58, peak: 1800, width: 3.5 }),
      spot({ name: 'diffuse-', x: 56, y: 82, peak: -90, width: 10, velocity: [0.3, 0] }),
    ],
  },
  {
    name: 'emerging-twisted',
    description: 'two opposite twisted buried sources rising at 0.2 km/s, separating (+-0.1 km/s) and shearing (+-0.15 km/s); bx, by, vz exact',
    grid: grid128, vector: true, target: 'emerging',
    objects: [
      source({ name: 'src+', x: 53, y: 64, depth: 2.5, peak: 1800, velocity: [-0.1, 0.15, 0.2], twist: { field: 400, radius: 2, height: 3 } }),
      source({ name: 'src-', x: 75, y: 64, depth: 2.5, peak: -1800, velocity: [0.1, -0.15, 0.2], twist: { field: -400, radius: 2, height: 3 } }),
    ],
  },
  {
    name: 'rising-twisted',
    description: 'the same twisted sources only rising at 0.2 km/s (v_t = 0, v_n uniform: an exact affine flow; true shear 0)',
    grid: grid128, vector: true, target: 'emerging',
    objects: [
      source({ name: 'src+', x: 53, y: 64, depth: 2.5, peak: 1800, velocity: [0, 0, 0.2], twist: { field: 400, radius: 2, height: 3 } }),
      source({ name: 'src-', x: 75, y: 64, depth: 2.5, peak: -1800, velocity: [0, 0, 0.2], twist: { field: -400, radius: 2, height: 3 } }),
    ],
  },
  {
    name: 'static',
    description: 'three spots (one elongated) and diffuse flux, nothing moving (true everything 0)',
    grid: grid128, vector: false, target: 'static',
    objects: [
      spot({ name: 'a+', x: 44, y: 60, peak: 1800, width: 4 }),
      spot({ name: 'b-', x: 80, y: 66, peak: -1600, width: 4.5, axisRatio: 1.8, angle: 0.6 }),
      spot({ name: 'c+', x: 64, y: 92, peak: 900, width: 3 }),
      spot({ name: 'diffuse+', x: 64, y: 60, peak: 60, width: 20 }),
    ],
  },
  {
    name: 'edge-cut',
    description: 'elongated + spot (axis ratio 2) cut in half by the grid edge, sliding along it at 0.3 km/s and turning at 5 deg/h, beside a static - spot',
    grid: grid128, vector: false, target: 'other',
    objects: [
      spot({ name: 'edge+', x: 1, y: 64, peak: 1800, width: 6, axisRatio: 2, angle: 0.3, velocity: [0, 0.3], spin: degH(5) }),
      spot({ name: 'static-', x: 36, y: 64, peak: -1600, width: 4 }),
    ],
    turning: ['edge+'],
  },
];

export function sceneByName(name: string): Scene {
  const s = SCENES.find((x) => x.name === name);
  if (!s) throw new Error(`no accuracy scene named ${JSON.stringify(name)}; known: ${SCENES.map((x) => x.name).join(', ')}`);
  return s;
}
