// The per-frame step for a frame on the sphere: what core/frameAnalysis.ts analyseFrame does when
// `sphereToMeasure` takes the frame, so the monitor's compute worker and the batch take the same step.
//
// Which frames: a whole-Sun heliographic map (CAR/CEA, 360 degrees of longitude) always (the
// planar engine has no meaning there), and it must carry its velocity (toward increasing longitude
// and toward the north, km/s); a heliographic patch only when the settings ask (`patches: true`)
// and it carries its velocity. Other patches stay on the planar path as before: it infers
// velocities from frame pairs and segments and tracks footpoints, which the sphere engine does not.
// The sample is measureSphere's, with the split of the frame's own labels when it has them, and it
// carries the sphere's figures for the series columns (core/accumulate.ts). Nothing is carried to
// the next frame: each map is measured on its own.

import type { Frame } from '../frame.js';
import { hasVelocity } from '../frame.js';
import type { FrameAnalysis } from '../frameAnalysis.js';
import type { SphereMaps, SphereSettings } from './measureSphere.js';
import { measureSphere, sphereRateSample } from './measureSphere.js';
import type { SphericalGrid } from './sphericalGrid.js';
import { sphericalGrid } from './sphericalGrid.js';
import { isSphericalFrame, sphericalFrame } from './sphericalFrame.js';

export interface SphereAnalysisSettings extends SphereSettings {
  /** Measure heliographic patches that carry their velocity on the sphere too (default false: planar, with footpoints). */
  readonly patches?: boolean;
}

/**
 * The grid and maps when the frame is to be measured on the sphere, undefined for the planar path.
 * Throws InputError for a whole-Sun map without velocity, and, with `patches`, for heliographic
 * axes the sphere engine cannot read.
 */
export function sphereToMeasure(frame: Frame, settings: SphereAnalysisSettings = {}): { grid: SphericalGrid; maps: SphereMaps } | undefined {
  if (!isSphericalFrame(frame)) return undefined;
  const patches = settings.patches === true;
  let grid: SphericalGrid;
  try {
    grid = sphericalGrid(frame.provenance!.keywords!, frame.nx, frame.ny, frame.provenance?.source ?? 'frame');
  } catch (e) {
    // Axes the sphere engine does not read (e.g. pixel axes turned against the projection's): a
    // patch goes on as the flat patch it was taken for, unless the sphere was asked for.
    if (patches) throw e;
    return undefined;
  }
  if (!grid.wholeSun && !(patches && hasVelocity(frame))) return undefined;
  return sphericalFrame(frame, grid); // a whole Sun without velocity: InputError naming vx/vy
}

export function analyseSphericalFrame(
  frame: Frame, s: { grid: SphericalGrid; maps: SphereMaps }, settings: { readonly noiseG?: number; readonly sphere?: SphereAnalysisSettings } = {},
): FrameAnalysis {
  const { patches: _patches, ...sphere } = settings.sphere ?? {};
  const m = measureSphere(s.grid, s.maps, { ...(settings.noiseG !== undefined && { noiseG: settings.noiseG }), ...sphere }, frame.provenance?.source ?? 'frame');
  return {
    sample: sphereRateSample(m, frame.time, 0, 'given'),
    velocityNotes: [],
    maps: { vx: frame.vx, vy: frame.vy, ...(frame.labels && { labels: frame.labels }) },
    state: {},
  };
}
