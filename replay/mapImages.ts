// Images on a frame's grid for the maps files (--maps, and the monitor's maps.fits): float32
// through the core FITS writer, with DATE-OBS (UTC) on every image and the world coordinates of
// the frame: the input's celestial/heliographic WCS and observer keywords when its headers had
// them (kept in the frame's provenance, turned with any mirror; core/frameAssembly/wcs.ts), else a
// linear WCS in Mm. Frames themselves are written by core/frameAssembly/frameToFits.ts.

import type { Frame } from '../core/frame.js';
import type { FitsKeyword } from '../core/fits/cards.js';
import type { ImageToWrite, ImageWcs } from '../core/fits/writeImage.js';
import { frameWcs, observerRecord } from '../core/frameAssembly/wcs.js';

/** DATE-OBS text: ISO 8601 without the zone letter, milliseconds kept (FITS Standard 4.0, 9.1.1). */
export function fitsDate(time: number): string {
  return new Date(time).toISOString().replace(/Z$/, '');
}

function timeKeywords(time: number): FitsKeyword[] {
  return [
    { key: 'DATE-OBS', value: fitsDate(time), comment: 'observation time' },
    { key: 'TIMESYS', value: 'UTC' },
  ];
}

/** Observer keywords that are written anew (the time, in UTC) or would contradict it. */
const REWRITTEN = new Set(['DATE-OBS', 'TIMESYS', 'MJD-OBS', 'DATEREF']);

type GridSource = Pick<Frame, 'nx' | 'ny' | 'dx' | 'dy' | 'time'> & { readonly provenance?: Frame['provenance'] };

/** The WCS of a frame's maps and the observer keywords to go with it. */
export function gridWcs(frame: GridSource): { wcs: ImageWcs; keywords: FitsKeyword[] } {
  const k = frame.provenance?.keywords;
  const w = k ? frameWcs(k, frame.nx, frame.ny) : undefined;
  if (!w || !k) return { wcs: { cdelt: [frame.dx, frame.dy] }, keywords: [] };
  const keywords: FitsKeyword[] = Object.entries(observerRecord(k))
    .filter(([key]) => !REWRITTEN.has(key))
    .map(([key, value]) => ({ key, value, ...(typeof value === 'number' && !Number.isInteger(value) && { float: true }) }));
  return {
    wcs: {
      ctype: w.ctype, cunit: w.cunit, crpix: w.crpix, crval: w.crval, cdelt: w.cdelt, pc: w.pc, pv: w.pv,
      ...(w.lonpole !== undefined && { lonpole: w.lonpole }), ...(w.latpole !== undefined && { latpole: w.latpole }),
    },
    keywords,
  };
}

/**
 * One image of a frame's grid (a frame, or anything with its grid and time: a stored frame's row;
 * with its provenance the input's world coordinates are kept).
 */
export function gridImage(frame: GridSource, name: string, values: ArrayLike<number>, bunit: string): ImageToWrite {
  const { wcs, keywords } = gridWcs(frame);
  return {
    name, nx: frame.nx, ny: frame.ny, values, bunit, wcs,
    keywords: [...timeKeywords(frame.time), ...keywords],
  };
}
