// `helicord rate FRAME [FRAME2]`: the injection rate of a frame, as one JSON object.
import { readFile } from 'node:fs/promises';
import type { Frame } from '../../core/frame.js';
import { InputError } from '../../core/inputError.js';
import { rateSample } from '../../core/rateSample.js';
import { loadFrameFile } from '../frameFiles.js';
import type { ParsedArgs } from './args.js';
import { numberFlag, stringFlag } from './args.js';

async function labelsFor(frame: Frame, option: string | undefined, source: string): Promise<Int32Array | null> {
  if (option === undefined || option === 'from-file') return frame.labels ?? null;
  if (option === 'none') return null;
  let json: unknown;
  try {
    json = JSON.parse(await readFile(option, 'utf8'));
  } catch (e) {
    throw new InputError(option, '(file)', `cannot be read as JSON: ${(e as Error).message}`);
  }
  const arr = Array.isArray(json) ? json : (json as { labels?: unknown }).labels;
  if (!Array.isArray(arr) || arr.length !== frame.nx * frame.ny || !arr.every((v) => Number.isInteger(v) && v >= 0)) {
    throw new InputError(option, 'labels', `must be ${frame.nx * frame.ny} non-negative integers to match ${source}`);
  }
  return Int32Array.from(arr as number[]);
}

export async function rateCommand(args: ParsedArgs, out: NodeJS.WritableStream): Promise<number> {
  const files = args.positional;
  if (files.length < 1 || files.length > 2) throw new Error('give one frame file (or two consecutive frames)');
  const frames = await Promise.all(files.map((f) => loadFrameFile(f)));
  const frame = frames[frames.length - 1];
  const noiseG = numberFlag(args, 'noise');
  const labels = await labelsFor(frame, stringFlag(args, 'labels'), files[files.length - 1]);
  const r = rateSample({ frame, labels, ...(noiseG !== undefined && { noiseG }) });
  const s = r.sample;
  const result: Record<string, unknown> = {
    time: new Date(s.time).toISOString(),
    total: s.total,
    total_ga: s.totalGa,
    spin: s.spin,
    orbit: s.orbit,
    background: s.background,
    ...(s.emergence !== undefined && { emergence: s.emergence, shear: s.shear }),
    sigma_total: s.sigmaTotal,
    noise_g: s.noiseG,
    masked_fraction: s.maskedFraction,
    velocity_method: s.velocityMethod,
    split_method: s.splitMethod,
    flags: s.flags,
    unit: 'Mx^2/s',
  };
  if (args.flags.footpoints && r.split) {
    result.footpoints = r.split.ids.map((id, a) => ({ id, spin: r.split!.spin[a] }));
    result.pair_ids = r.split.ids;
    result.orbit_matrix = Array.from({ length: r.split.ids.length }, (_, a) =>
      Array.from(r.split!.orbit.subarray(a * r.split!.ids.length, (a + 1) * r.split!.ids.length)));
  }
  out.write(JSON.stringify(result, null, 2) + '\n');
  return 0;
}
