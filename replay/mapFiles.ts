// The maps of one analysed frame as a FITS file (--maps DIR): G_theta, the footpoint labels and
// the velocity used, each an image HDU on the frame's grid, through the core FITS writer.

import { readFile, writeFile } from 'node:fs/promises';
import { basename, join } from 'node:path';
import type { FrameAnalysis } from '../core/frameAnalysis.js';
import type { Frame } from '../core/frame.js';
import type { ImageToWrite } from '../core/fits/writeImage.js';
import { listHdus } from '../core/fits/hduList.js';
import { InputError } from '../core/inputError.js';
import { writeFits } from '../core/fits/writeImage.js';
import type { RateSample } from '../core/rateSample.js';
import type { ChunkJob } from './analyseChunk.js';
import { fitsDate, gridImage } from './mapImages.js';

/** The maps file name for a frame file: its name without the extension, then `.maps.fits`. */
export function mapsFileName(file: string): string {
  return basename(file).replace(/(\.(json|fits|fit|fts|fz))?(\.gz)?$/i, '') + '.maps.fits';
}

/** FITS bytes of a frame's maps; undefined when the analysis kept none. */
export function mapsToFits(frame: Frame, maps: FrameAnalysis['maps'], sample?: RateSample, source?: string): Uint8Array | undefined {
  const images: ImageToWrite[] = [];
  if (maps.gTheta) images.push(gridImage(frame, 'GTHETA', maps.gTheta, 'Mx2 cm-2 s-1'));
  if (maps.labels) images.push(gridImage(frame, 'LABELS', maps.labels, ''));
  if (maps.vx && maps.vy) images.push(gridImage(frame, 'VX', maps.vx, 'km/s'), gridImage(frame, 'VY', maps.vy, 'km/s'));
  if (images.length === 0) return undefined;
  return writeFits({
    primary: [
      { key: 'CREATOR', value: 'helicord process' },
      { key: 'DATE-OBS', value: fitsDate(sample?.time ?? frame.time), comment: 'time of the rate sample' },
      { key: 'TIMESYS', value: 'UTC' },
      ...(source ? [{ key: 'SRCFILE', value: basename(source), comment: 'frame file the maps come from' }] : []),
      ...(sample ? [
        { key: 'VELMETH', value: sample.velocityMethod, comment: 'how the velocity was obtained' },
        { key: 'RATE', value: sample.total, float: true, comment: '[Mx2 s-1] integral of G_theta' },
      ] : []),
    ],
    images,
  });
}

/** A map writer for analyseChunk that writes into `dir`. */
export function mapWriterFor(dir: string) {
  return async (job: ChunkJob, frame: Frame, maps: FrameAnalysis['maps'], sample: RateSample | undefined): Promise<void> => {
    const bytes = mapsToFits(frame, maps, sample, job.file);
    if (bytes) await writeFile(join(dir, mapsFileName(job.file)), bytes);
  };
}

/**
 * Rewrites the LABELS image of a maps file in place with other footpoint ids (`ids`: the ids in
 * the file -> the ids to write; background 0 and unlisted ids stay as they are). The batch merge
 * uses it for chunks whose tracker ids are mapped onto the run's (replay/chunkSeams.ts).
 */
export async function relabelMapsFile(path: string, ids: ReadonlyMap<number, number>): Promise<void> {
  const bytes = new Uint8Array(await readFile(path));
  const hdu = listHdus(bytes, path, { verifyChecksums: false }).find((h) => h.name === 'LABELS');
  if (!hdu) return;
  if (hdu.bitpix !== -32) throw new InputError(path, 'LABELS', `BITPIX is ${hdu.bitpix}, the maps writer writes -32`);
  const view = new DataView(bytes.buffer, bytes.byteOffset + hdu.dataStart, hdu.dataBytes);
  let changed = false;
  for (let at = 0; at < hdu.dataBytes; at += 4) {
    const id = view.getFloat32(at, false);
    const to = ids.get(id);
    if (to !== undefined && to !== id) { view.setFloat32(at, to, false); changed = true; }
  }
  if (changed) await writeFile(path, bytes);
}
