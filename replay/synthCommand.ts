// `helicord synth --out FOLDER`: writes the demo region as frame files, one per frame, and its
// true series beside them (truth.csv, in the batch CSV's columns). FITS frames by default (the
// README's frame convention, core/frameAssembly/frameToFits.ts), JSON frames on request; the
// file names sort in time order. `scene: 'sun'` writes the whole-Sun demo instead
// (replay/demo/sunDemo.ts: invented bipoles on a Carrington map with their velocity, no truth file).

import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Frame } from '../core/frame.js';
import { frameToJson } from '../core/frameJson.js';
import { frameToFits } from '../core/frameAssembly/frameToFits.js';
import { InputError } from '../core/inputError.js';
import { seriesCsv, seriesRow } from '../core/seriesColumns.js';
import type { DemoOptions } from './demo/demoRegion.js';
import { demoRegion } from './demo/demoRegion.js';
import { truthSeries } from './demo/demoTruth.js';
import { sunDemoFits, sunDemoSettings } from './demo/sunDemo.js';

export interface SynthArgs {
  readonly out: string;
  readonly frames?: number;
  readonly size?: number;
  readonly withVelocity?: boolean;
  /** 'fits' (default) or 'json'. */
  readonly format?: 'fits' | 'json';
  /** Further demo options (cadence, noise, seed, ...). */
  readonly demo?: DemoOptions;
  /** Where to say what was written (nothing by default). */
  readonly progress?: NodeJS.WritableStream;
  /**
   * 'region' (default): the invented active region; 'sun': invented whole-Sun maps (FITS, with
   * velocity; `size` is the number of rows, `frames`, `demo.cadenceS`, `demo.noiseG`, `demo.seed` apply).
   */
  readonly scene?: 'region' | 'sun';
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
export function demoFrameName(i: number, count: number, format: 'fits' | 'json' = 'fits'): string {
  return `demo_${String(i).padStart(Math.max(4, String(count - 1).length), '0')}.${format}`;
}

export async function synth(args: SynthArgs): Promise<void> {
  if (args.scene === 'sun') return synthSun(args);
  if (args.scene !== undefined && args.scene !== 'region') throw new InputError('synth', 'demo', `must be region or sun, got ${String(args.scene)}`);
  const region = demoRegion({
    ...args.demo,
    ...(args.frames !== undefined && { frames: args.frames }),
    ...(args.size !== undefined && { size: args.size }),
    ...(args.withVelocity !== undefined && { withVelocity: args.withVelocity }),
  });
  await mkdir(args.out, { recursive: true });
  const format = args.format ?? 'fits';
  if (format !== 'fits' && format !== 'json') throw new InputError('synth', 'format', `must be fits or json, got ${String(format)}`);
  for (let i = 0; i < region.frameCount; i++) {
    const frame = region.frameAt(i);
    const name = join(args.out, demoFrameName(i, region.frameCount, format));
    if (format === 'fits') {
      await writeFile(name, frameToFits(frame, {
        creator: 'helicord synth',
        keywords: [
          { key: 'ORIGIN', value: 'helicord demo region', comment: 'synthetic: an invented active region' },
          { key: 'FRAMENO', value: i }, { key: 'SEED', value: region.seed }, { key: 'NOISE_G', value: region.noiseG, float: true },
        ],
      }));
    } else {
      await writeFile(name, JSON.stringify(frameToJson(frameForFile(frame))));
    }
  }
  const rows = truthSeries(region).map(({ sample, point }) => seriesRow(sample, point));
  await writeFile(join(args.out, 'truth.csv'), seriesCsv(rows));
  args.progress?.write(`wrote ${region.frameCount} demo frames (${region.grid.nx}x${region.grid.ny}, ${region.cadenceS} s cadence) and truth.csv as ${format.toUpperCase()} to ${args.out}\n`);
}

/** The whole-Sun demo: one FITS map per time (always FITS: the axes need the WCS keywords). */
async function synthSun(args: SynthArgs): Promise<void> {
  if (args.format === 'json') throw new InputError('synth', 'format', 'the whole-Sun demo is written as FITS only (its heliographic axes are FITS WCS keywords)');
  const o = sunDemoSettings({
    ...(args.size !== undefined && { ny: args.size }), ...(args.frames !== undefined && { frames: args.frames }),
    ...(args.demo?.cadenceS !== undefined && { cadenceS: args.demo.cadenceS }), ...(args.demo?.noiseG !== undefined && { noiseG: args.demo.noiseG }),
    ...(args.demo?.seed !== undefined && { seed: args.demo.seed }),
  });
  await mkdir(args.out, { recursive: true });
  for (let i = 0; i < o.frames; i++) {
    await writeFile(join(args.out, demoFrameName(i, o.frames).replace(/^demo_/, 'sun_')), sunDemoFits(i, o));
  }
  args.progress?.write(`wrote ${o.frames} whole-Sun demo maps (${2 * o.ny}x${o.ny}, CRLN-CAR, ${o.cadenceS} s cadence, with velocity) as FITS to ${args.out}\n`);
}
