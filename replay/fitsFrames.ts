// Images on a frame's grid for the maps files (--maps): float32 through the core FITS writer,
// with DATE-OBS (UTC) and a linear WCS in Mm on every image. Frames themselves are written by
// core/frameAssembly/frameToFits.ts.

import type { Frame } from '../core/frame.js';
import type { FitsKeyword } from '../core/fits/cards.js';
import type { ImageToWrite } from '../core/fits/writeImage.js';

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

/** One image of a frame's grid (a frame, or anything with its grid and time: a stored frame's row). */
export function gridImage(frame: Pick<Frame, 'nx' | 'ny' | 'dx' | 'dy' | 'time'>, name: string, values: ArrayLike<number>, bunit: string): ImageToWrite {
  return {
    name, nx: frame.nx, ny: frame.ny, values, bunit,
    wcs: { cdelt: [frame.dx, frame.dy] },
    keywords: timeKeywords(frame.time),
  };
}
