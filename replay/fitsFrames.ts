// Our frames and maps as FITS files, through the core FITS writer, in the frame convention of
// the README: one file per time, image HDUs named BN (G), and VX, VY (km/s) when the frame
// carries a velocity, with DATE-OBS (UTC) and a linear WCS in Mm on every image.

import type { Frame } from '../core/frame.js';
import type { FitsKeyword } from '../core/fits/cards.js';
import type { ImageToWrite } from '../core/fits/writeImage.js';
import { writeFits } from '../core/fits/writeImage.js';

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

/** One image of a frame's grid. */
export function gridImage(frame: Frame, name: string, values: ArrayLike<number>, bunit: string): ImageToWrite {
  return {
    name, nx: frame.nx, ny: frame.ny, values, bunit,
    wcs: { cdelt: [frame.dx, frame.dy] },
    keywords: timeKeywords(frame.time),
  };
}

/** A frame as one FITS file (BN, then VX and VY when present). */
export function frameToFits(frame: Frame, provenance: FitsKeyword[] = []): Uint8Array {
  const images = [gridImage(frame, 'BN', frame.bn, 'G')];
  if (frame.vx && frame.vy) images.push(gridImage(frame, 'VX', frame.vx, 'km/s'), gridImage(frame, 'VY', frame.vy, 'km/s'));
  return writeFits({
    primary: [{ key: 'CREATOR', value: 'helicord' }, ...timeKeywords(frame.time), ...provenance],
    images,
  });
}
