// `helicord synth --out FOLDER`: writes the demo region as frame files, one per frame, and its
// true series beside them (truth.csv, in the batch CSV's columns). Frames are written as JSON
// frames until the core FITS writer exists; the file names sort in time order.

import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Frame } from '../core/frame.js';
import { frameToJson } from '../core/frameJson.js';
import { seriesCsv, seriesRow } from '../core/seriesColumns.js';
import type { DemoOptions } from './demo/demoRegion.js';
import { demoRegion } from './demo/demoRegion.js';
import { truthSeries } from './demo/demoTruth.js';

export interface SynthArgs {
  readonly out: string;
  readonly frames?: number;
  readonly size?: number;
  readonly withVelocity?: boolean;
  /** Further demo options (cadence, noise, seed, ...). */
  readonly demo?: DemoOptions;
  /** Where to say what was written (nothing by default). */
  readonly progress?: NodeJS.WritableStream;
}

/** Rounds a map for a text file: 1e-3 G and 1e-6 km/s are far below the noise and the velocities. */
function rounded(map: Float64Array | undefined, step: number): Float64Array | undefined {
  if (!map) return undefined;
  const out = new Float64Array(map.length);
  for (let i = 0; i < map.length; i++) out[i] = Math.round(map[i] / step) * step;
  return out;
}

function frameForFile(f: Frame): Frame {
  return {
    ...f, bn: rounded(f.bn, 1e-3)!,
    ...(f.vx && { vx: rounded(f.vx, 1e-6), vy: rounded(f.vy, 1e-6) }),
  };
}

/** The file name of frame i of `count` (zero-padded so that name order is time order). */
export function demoFrameName(i: number, count: number): string {
  return `demo_${String(i).padStart(Math.max(4, String(count - 1).length), '0')}.json`;
}

export async function synth(args: SynthArgs): Promise<void> {
  const region = demoRegion({
    ...args.demo,
    ...(args.frames !== undefined && { frames: args.frames }),
    ...(args.size !== undefined && { size: args.size }),
    ...(args.withVelocity !== undefined && { withVelocity: args.withVelocity }),
  });
  await mkdir(args.out, { recursive: true });
  for (let i = 0; i < region.frameCount; i++) {
    const frame = frameForFile(region.frameAt(i));
    await writeFile(join(args.out, demoFrameName(i, region.frameCount)), JSON.stringify(frameToJson(frame)));
  }
  const rows = truthSeries(region).map(({ sample, point }) => seriesRow(sample, point));
  await writeFile(join(args.out, 'truth.csv'), seriesCsv(rows));
  args.progress?.write(`wrote ${region.frameCount} demo frames (${region.grid.nx}x${region.grid.ny}, ${region.cadenceS} s cadence) and truth.csv to ${args.out}\n`);
}
