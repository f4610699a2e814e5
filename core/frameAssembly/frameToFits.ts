// A Frame written as a FITS file of our convention (image HDUs BN, BX, BY, VX, VY, VZ, float32,
// G and km/s, CDELT in Mm, DATE-OBS in UTC), so that frameFromFits reads it back.

import type { Frame } from '../frame.js';
import { FRAME_MAPS } from '../frame.js';
import type { FitsKeyword } from '../fits/cards.js';
import type { CompressionSpec } from '../fits/compressImage.js';
import { writeFits } from '../fits/writeImage.js';
import { formatUtc } from './frameTime.js';

export interface FrameFitsOptions {
  /** CREATOR keyword (program and version). */
  readonly creator?: string;
  /** When the file is written (UTC ms), for the DATE keyword; core has no clock, so the caller passes it. */
  readonly writtenAt?: number;
  /** Further primary keywords (provenance, HISTORY). */
  readonly keywords?: readonly FitsKeyword[];
  /** Write the maps tile-compressed. */
  readonly compression?: CompressionSpec;
}

/** The FITS bytes of a frame (float32 maps; values beyond float32 precision are rounded). */
export function frameToFits(frame: Frame, options: FrameFitsOptions = {}): Uint8Array {
  const primary: FitsKeyword[] = [
    { key: 'DATE-OBS', value: formatUtc(frame.time), comment: 'observation time' },
    { key: 'TIMESYS', value: 'UTC' },
    ...(options.creator ? [{ key: 'CREATOR', value: options.creator, comment: 'program that wrote the file' }] : []),
    ...(options.writtenAt !== undefined ? [{ key: 'DATE', value: formatUtc(options.writtenAt), comment: 'file written (UTC)' }] : []),
    ...(frame.provenance?.source ? [{ key: 'SRCFILE', value: frame.provenance.source, comment: 'where the frame came from' }] : []),
    ...(options.keywords ?? []),
  ];
  const images = FRAME_MAPS.filter((m) => frame[m] !== undefined).map((m) => ({
    name: m.toUpperCase(),
    nx: frame.nx,
    ny: frame.ny,
    values: frame[m]!,
    bunit: m.startsWith('b') ? 'G' : 'km/s',
    wcs: { cdelt: [frame.dx, frame.dy] as [number, number] },
    ...(options.compression && { compression: options.compression }),
  }));
  return writeFits({ primary, images });
}
