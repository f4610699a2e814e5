// The command-line faces of `process` and `synth` (replay/), in the shape of server/cli.ts's commands
// (parsed arguments in, exit code out).

import type { CommandSpec, ParsedArgs } from './args.js';
import { COMPONENT_OPTIONS, componentSettingsFrom } from './componentOptions.js';
import { processFolder } from '../../replay/processCommand.js';
import { synth } from '../../replay/synthCommand.js';
import { DEMO_DEFAULTS } from '../../replay/demo/demoRegion.js';

export const PROCESS_SPEC: CommandSpec = {
  name: 'process',
  usage: ['process FOLDER --out RESULT.csv [--json RESULT.json] [--maps DIR] [--config FILE] [--workers N] [component options]'],
  summary: 'compute a whole archive folder without a server (CSV, JSON, FITS maps)',
  description: 'Compute a whole archive (JSON and FITS frames, taken in time order) without a server, on every core. Unreadable '
    + 'frames, duplicated times and frames of another grid are reported and skipped. Progress on stderr. FOLDER holds the '
    + 'frame files; with a layout of one file per component (--layout cea-components, or --component rules) its FITS files '
    + 'are grouped by time into frames.',
  positionals: { min: 1, max: 1, what: 'one folder of frames (helicord process FOLDER --out RESULT.csv)' },
  options: {
    out: { kind: 'string', value: 'RESULT.csv', help: 'the CSV file written: one row per rate sample (needed)' },
    json: { kind: 'string', value: 'RESULT.json', help: 'also write the series, footpoints, events, gaps and alerts as JSON' },
    maps: { kind: 'string', value: 'DIR', help: 'write one FITS file of maps (G_theta, labels, velocity) per analysed frame into DIR, with the input\'s coordinates' },
    config: { kind: 'string', value: 'FILE', help: 'a config file { "analysis", "budget", "rules", "components" } (README); the component options win over its components' },
    workers: { kind: 'integer', value: 'N', min: 1, defaultText: 'every core', help: 'worker threads' },
    ...COMPONENT_OPTIONS,
  },
};

export const SYNTH_SPEC: CommandSpec = {
  name: 'synth',
  usage: ['synth --out FOLDER [--demo region|sun] [--frames N] [--size N] [--with-velocity] [--format fits|json] [--cadence S] [--noise G] [--seed N]'],
  summary: 'write the built-in demo region as frame files, with its true injection',
  description: 'Write the built-in demo region (an invented active region, 72 h story) as frame files, with its true injection in truth.csv.',
  positionals: { min: 0, max: 0, what: 'no file names' },
  options: {
    out: { kind: 'string', value: 'FOLDER', help: 'the folder written (needed)' },
    demo: { kind: 'string', value: 'NAME', choices: ['region', 'sun'], default: 'region', help: 'region: the invented active region; sun: invented whole-Sun Carrington maps with velocity (FITS; --size is the rows, default 180; 21 maps 6 h apart, no noise by default; no truth.csv)' },
    frames: { kind: 'integer', value: 'N', min: 1, defaultText: 'the whole story', help: 'how many frames' },
    size: { kind: 'integer', value: 'N', min: 1, defaultText: String(DEMO_DEFAULTS.size), help: 'frame side, pixels' },
    'with-velocity': { kind: 'boolean', help: 'frames carry their true velocity (otherwise it is inferred)' },
    format: { kind: 'string', value: 'FORMAT', choices: ['fits', 'json'], default: 'fits', help: 'frame file format' },
    cadence: { kind: 'number', value: 'S', above: 0, defaultText: String(DEMO_DEFAULTS.cadenceS), help: 'seconds between frames' },
    noise: { kind: 'number', value: 'G', min: 0, defaultText: String(DEMO_DEFAULTS.noiseG), help: 'field noise, gauss' },
    seed: { kind: 'integer', value: 'N', defaultText: String(DEMO_DEFAULTS.seed), help: 'noise seed' },
  },
};

export async function processCli(args: ParsedArgs, _out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  const folder = args.positional[0];
  const out = args.string('out');
  if (out === undefined) throw new Error('--out RESULT.csv is needed (the CSV file to write)');
  const json = args.string('json');
  const maps = args.string('maps');
  const config = args.string('config');
  const workers = args.number('workers');
  const components = componentSettingsFrom(args);
  const r = await processFolder({
    folder, out, progress: err, components,
    ...(json !== undefined && { json }), ...(maps !== undefined && { maps }),
    ...(config !== undefined && { config }), ...(workers !== undefined && { workers }),
  });
  return r.used > 0 ? 0 : 1;
}

export async function synthCli(args: ParsedArgs, out: NodeJS.WritableStream): Promise<number> {
  const folder = args.string('out');
  if (folder === undefined) throw new Error('--out FOLDER is needed (the folder to write)');
  const format = args.string('format') as 'fits' | 'json';
  const frames = args.number('frames');
  const size = args.number('size');
  const cadenceS = args.number('cadence');
  const noiseG = args.number('noise');
  const seed = args.number('seed');
  await synth({
    out: folder, format, progress: out, scene: args.string('demo') as 'region' | 'sun',
    ...(frames !== undefined && { frames }), ...(size !== undefined && { size }),
    ...(args.boolean('with-velocity') && { withVelocity: true }),
    demo: { ...(cadenceS !== undefined && { cadenceS }), ...(noiseG !== undefined && { noiseG }), ...(seed !== undefined && { seed }) },
  });
  return 0;
}
