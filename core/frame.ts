// A frame: one observation time of one region on one grid. Maps are row-major Float64Array;
// NaN means "no data". Velocities are in km/s, fields in gauss (DEVELOPERS.md, Conventions).

import type { Grid } from './grid.js';
import { checkGrid, checkMapSize } from './grid.js';
import { InputError } from './inputError.js';

export interface Provenance {
  /** Where the frame came from (file name, upload id). */
  source?: string;
  /** Header keywords kept from the original file. */
  keywords?: Record<string, string | number | boolean>;
}

export interface Frame extends Grid {
  /** Observation time, UTC milliseconds since 1970. */
  readonly time: number;
  /** Normal field, G (required). */
  readonly bn: Float64Array;
  readonly bx?: Float64Array;
  readonly by?: Float64Array;
  /** Horizontal velocity (km/s). Without vz these are taken as the footpoint velocity u itself. */
  readonly vx?: Float64Array;
  readonly vy?: Float64Array;
  /** Normal velocity (km/s), +z into the corona. */
  readonly vz?: Float64Array;
  /** Footpoint labels, 0 = unassigned. */
  readonly labels?: Int32Array;
  readonly provenance?: Provenance;
}

export const FRAME_MAPS = ['bn', 'bx', 'by', 'vx', 'vy', 'vz'] as const;
export type FrameMapName = (typeof FRAME_MAPS)[number];

/** Checks grid, sizes, pairing of optional maps and that bn holds some data. Throws InputError. */
export function checkFrame(frame: Frame, source = frame.provenance?.source ?? 'frame'): void {
  checkGrid(frame, source);
  if (!Number.isFinite(frame.time)) throw new InputError(source, 'time', 'is not a valid time');
  for (const name of FRAME_MAPS) {
    const map = frame[name];
    if (map !== undefined) checkMapSize(frame, map, name, source);
  }
  if (frame.labels) checkMapSize(frame, frame.labels, 'labels', source);
  if ((frame.vx === undefined) !== (frame.vy === undefined)) {
    throw new InputError(source, frame.vx ? 'vy' : 'vx', 'vx and vy must be given together');
  }
  if ((frame.bx === undefined) !== (frame.by === undefined)) {
    throw new InputError(source, frame.bx ? 'by' : 'bx', 'bx and by must be given together');
  }
  // One valid value is enough (the frame is checked several times on its way: no full count).
  let i = 0;
  while (i < frame.bn.length && !Number.isFinite(frame.bn[i])) i++;
  if (i === frame.bn.length) throw new InputError(source, 'bn', 'holds no valid value (all NaN)');
}

/** True when the frame carries a horizontal velocity field. */
export function hasVelocity(frame: Frame): boolean {
  return frame.vx !== undefined && frame.vy !== undefined;
}

/** True when the frame carries the horizontal field and the normal velocity (vector data). */
export function hasVectorData(frame: Frame): boolean {
  return frame.bx !== undefined && frame.by !== undefined && frame.vz !== undefined && hasVelocity(frame);
}

/**
 * A checked Frame from its grid, time and maps (bn required; the optional maps are kept only when
 * present). Throws InputError naming `source`.
 */
export function frameFromMaps(
  base: Grid & { readonly time: number },
  maps: Partial<Record<FrameMapName, Float64Array>>,
  source: string,
  extra: { readonly labels?: Int32Array; readonly provenance?: Provenance } = {},
): Frame {
  if (!maps.bn) throw new InputError(source, 'bn', 'is missing; every frame needs the normal field');
  const frame: Frame = {
    time: base.time, nx: base.nx, ny: base.ny, dx: base.dx, dy: base.dy,
    bn: maps.bn,
    ...Object.fromEntries(FRAME_MAPS.filter((m) => m !== 'bn' && maps[m]).map((m) => [m, maps[m]])),
    ...(extra.labels && { labels: extra.labels }),
    provenance: extra.provenance ?? { source },
  };
  checkFrame(frame, source);
  return frame;
}
