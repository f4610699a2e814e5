// The command-line faces of `process` and `synth` (replay/), in the shape of server/cli.ts's commands
// (parsed arguments in, exit code out).

import type { ParsedArgs } from './args.js';
import { numberFlag, stringFlag } from './args.js';
import { processFolder } from '../../replay/processCommand.js';
import { synth } from '../../replay/synthCommand.js';

export const PROCESS_HELP = `  process FOLDER --out RESULT.csv [--json RESULT.json] [--maps DIR] [--config FILE] [--workers N]
        Compute a whole archive (JSON and FITS frames, taken in time order) without a server, on
        every core. Unreadable frames, duplicated times and frames of another grid are reported
        and skipped. Progress on stderr.`;

export const SYNTH_HELP = `  synth --out FOLDER [--frames N] [--size N] [--with-velocity] [--format fits|json] [--cadence S] [--noise G] [--seed N]
        Write the built-in demo region (an invented active region, 72 h story) as frame files,
        with its true injection in truth.csv.`;

function booleanFlag(args: ParsedArgs, name: string): boolean | undefined {
  const v = args.flags[name];
  if (v === undefined) return undefined;
  if (v === true || /^(1|true|yes|on)$/i.test(v)) return true;
  if (/^(0|false|no|off)$/i.test(v)) return false;
  throw new Error(`option --${name} is yes or no, got "${v}"`);
}

export async function processCli(args: ParsedArgs, _out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  const [folder, ...extra] = args.positional;
  if (folder === undefined || extra.length > 0) throw new Error('give one folder of frames: helicord process FOLDER --out RESULT.csv');
  const out = stringFlag(args, 'out');
  if (out === undefined) throw new Error('--out RESULT.csv is needed');
  const json = stringFlag(args, 'json');
  const maps = stringFlag(args, 'maps');
  const config = stringFlag(args, 'config');
  const workers = numberFlag(args, 'workers');
  const r = await processFolder({
    folder, out, progress: err,
    ...(json !== undefined && { json }), ...(maps !== undefined && { maps }),
    ...(config !== undefined && { config }), ...(workers !== undefined && { workers }),
  });
  return r.used > 0 ? 0 : 1;
}

export async function synthCli(args: ParsedArgs, out: NodeJS.WritableStream, _err?: NodeJS.WritableStream): Promise<number> {
  const folder = stringFlag(args, 'out');
  if (folder === undefined) throw new Error('--out FOLDER is needed');
  const format = stringFlag(args, 'format', 'fits');
  if (format !== 'fits' && format !== 'json') throw new Error(`--format is fits or json, got "${format}"`);
  const frames = numberFlag(args, 'frames');
  const size = numberFlag(args, 'size');
  const withVelocity = booleanFlag(args, 'with-velocity');
  const cadenceS = numberFlag(args, 'cadence');
  const noiseG = numberFlag(args, 'noise');
  const seed = numberFlag(args, 'seed');
  await synth({
    out: folder, format, progress: out,
    ...(frames !== undefined && { frames }), ...(size !== undefined && { size }),
    ...(withVelocity !== undefined && { withVelocity }),
    demo: { ...(cadenceS !== undefined && { cadenceS }), ...(noiseG !== undefined && { noiseG }), ...(seed !== undefined && { seed }) },
  });
  return 0;
}
