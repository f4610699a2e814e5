// Limits beyond which a frame's values cannot be photospheric measurements: a map holding them is
// corrupt or in the wrong unit, and one such frame would otherwise dominate a budget for good
// (a 1e38 G pixel makes a rate of order 1e110 Mx^2/s). The limits are far outside what is
// observed, so no real frame comes near them:
// - field: the strongest fields measured in sunspots are about 6 kG (Livingston, Harvey,
//   Malanushenko et al. 2006, Solar Physics 239, 41; from memory); the limit is 1e5 G per component;
// - velocity: photospheric flows are a few km/s, supersonic downflows a few tens (from memory);
//   the limit is 1000 km/s per component;
// - pixel size: from 1e-4 Mm (0.1 km, far below any telescope's resolution) to 100 Mm (a seventh
//   of the solar radius; synoptic maps of 1 degree per pixel have about 12 Mm).
// NaN (no data) is always allowed.

import type { Frame } from './frame.js';
import { InputError } from './inputError.js';

export interface PhysicalLimits {
  /** Largest |B| of any field component, G. */
  readonly fieldG: number;
  /** Largest |v| of any velocity component, km/s. */
  readonly speedKmS: number;
  /** Smallest and largest pixel side, Mm. */
  readonly pixelMm: readonly [number, number];
}

export const PHYSICAL_LIMITS: PhysicalLimits = { fieldG: 1e5, speedKmS: 1e3, pixelMm: [1e-4, 100] };

function checkMap(map: Float64Array | undefined, name: string, limit: number, unit: string, source: string): void {
  if (!map) return;
  for (let i = 0; i < map.length; i++) {
    const v = map[i];
    // v !== v: NaN (no data) is allowed; an infinity fails the comparison below.
    if (v !== v) continue;
    if (!(Math.abs(v) <= limit)) {
      throw new InputError(source, `${name}[${i}]`, `${v} ${unit} is beyond the physical limit of ${limit} ${unit} (docs/server.md): the map is corrupt or in another unit`);
    }
  }
}

/** Throws InputError (naming the map and pixel) when a frame holds values no photosphere has. */
export function checkPhysicalLimits(frame: Frame, source: string, limits: PhysicalLimits = PHYSICAL_LIMITS): void {
  const [lo, hi] = limits.pixelMm;
  for (const k of ['dx', 'dy'] as const) {
    if (!(frame[k] >= lo && frame[k] <= hi)) throw new InputError(source, k, `pixel size ${frame[k]} Mm is outside ${lo}..${hi} Mm (docs/server.md)`);
  }
  for (const k of ['bn', 'bx', 'by'] as const) checkMap(frame[k], k, limits.fieldG, 'G', source);
  for (const k of ['vx', 'vy', 'vz'] as const) checkMap(frame[k], k, limits.speedKmS, 'km/s', source);
}
