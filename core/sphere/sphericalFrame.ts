// Whether a frame is a map on the sphere, and its grid and maps when it is: a frame whose kept
// header keywords (provenance.keywords) name heliographic CAR or CEA axes (core/sphere/sphericalGrid.ts).
// What the monitor and the batch ask of each frame to choose the spherical engine over the planar one.

import type { Frame } from '../frame.js';
import { InputError } from '../inputError.js';
import type { SphereMaps } from './measureSphere.js';
import type { SphericalGrid } from './sphericalGrid.js';
import { sphericalGrid } from './sphericalGrid.js';

const SPHERICAL_AXES = /^(CRLN|HGLN)-(CAR|CEA)$/;

/** True when the frame's keywords give heliographic CAR/CEA axes. */
export function isSphericalFrame(frame: Pick<Frame, 'provenance'>): boolean {
  const c1 = frame.provenance?.keywords?.CTYPE1;
  return typeof c1 === 'string' && SPHERICAL_AXES.test(c1.trim().toUpperCase());
}

/**
 * The spherical grid and maps of a frame (velocity required), or undefined for a frame on a flat
 * grid. Throws InputError (naming the frame's source and the keyword) for spherical axes it cannot read.
 */
export function sphericalFrame(frame: Frame, known?: SphericalGrid): { grid: SphericalGrid; maps: SphereMaps } | undefined {
  if (!isSphericalFrame(frame)) return undefined;
  const source = frame.provenance?.source ?? 'frame';
  // `known`: the frame's grid when the caller has made it already.
  const grid = known ?? sphericalGrid(frame.provenance!.keywords!, frame.nx, frame.ny, source);
  if (!frame.vx || !frame.vy) throw new InputError(source, 'vx/vy', 'a map on the sphere needs its velocity (toward increasing longitude, toward the north, km/s)');
  return { grid, maps: { bn: frame.bn, vx: frame.vx, vy: frame.vy, ...(frame.labels && { labels: frame.labels }) } };
}
