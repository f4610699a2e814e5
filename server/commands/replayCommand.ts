// `helicord replay`: starts the monitor (as `serve` does) and feeds an archive folder, or the
// stored frames of a region, into a region at a chosen speed, through the same pipeline as live
// ingest; the page and POST /api/regions/:region/replay steer it. Runs until SIGINT or SIGTERM.
import { mergeAssemblySettings } from '../../core/frameAssembly/componentLayouts.js';
import { readBatchConfig } from '../../replay/batchConfig.js';
import { openArchive } from '../../replay/archiveSource.js';
import type { ReplayStart } from '../replayRegistry.js';
import { serve } from '../serve.js';
import type { CommandSpec, ParsedArgs } from './args.js';
import { COMPONENT_OPTIONS, componentSettingsFrom } from './componentOptions.js';
import { MONITOR_OPTIONS, monitorOptions, runUntilSignal } from './serveCommand.js';

export const REPLAY_SPEC: CommandSpec = {
  name: 'replay',
  usage: [
    'replay FOLDER --region NAME [--speed X] [--config FILE] [component options] [monitor options]',
    'replay --from-region OLD --region NEW [--config FILE] [--speed X] [monitor options]',
  ],
  summary: 'start the monitor and feed an archive folder (or a stored region) into a region',
  description: 'Start the monitor and feed the frames of FOLDER (JSON and FITS frames, read and ordered as by process; unreadable files '
    + 'are reported and skipped) into region NAME at X times their own cadence (0 = as fast as the pipeline takes them). With '
    + '--from-region the stored frames of region OLD are replayed into a new region NEW beside it, with the settings of --config '
    + 'FILE (as for process: analysis, budget, rules). Pause, resume, seek and speed from the page or POST /api/regions/NAME/replay.',
  positionals: { min: 0, max: 1, what: 'one folder of frames, or --from-region OLD' },
  options: {
    region: { kind: 'string', value: 'NAME', help: 'the region the frames go into (needed)' },
    'from-region': { kind: 'string', value: 'OLD', help: 'replay the stored frames of this region instead of a folder' },
    speed: { kind: 'number', value: 'X', min: 0, default: 1, help: 'times the frames\' own cadence; 0 = as fast as the pipeline takes them' },
    config: { kind: 'string', value: 'FILE', help: 'a config file { "analysis", "budget", "rules", "components" } (README) for the new region and for reading the folder' },
    ...COMPONENT_OPTIONS,
    ...MONITOR_OPTIONS,
  },
};

export async function replayCommand(args: ParsedArgs, out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  const region = args.string('region');
  if (region === undefined) throw new Error('replay needs --region NAME (the region the frames go into)');
  const fromRegion = args.string('from-region');
  const folder = args.positional[0];
  if ((folder === undefined) === (fromRegion === undefined)) throw new Error('replay needs either a FOLDER or --from-region OLD (not both)');
  const speed = args.number('speed')!;
  const config = await readBatchConfig(args.string('config'));
  const settings = args.given('config') ? { analysis: config.analysis, budget: config.budget, rules: config.rules } : undefined;
  const components = mergeAssemblySettings(config.components, componentSettingsFrom(args));

  let from: ReplayStart['from'];
  if (folder !== undefined) {
    const archive = await openArchive(folder, { components });
    err.write(`${folder}: ${archive.entries.length} frame${archive.entries.length === 1 ? '' : 's'} to replay, skipped ${archive.skipped.length}\n`);
    for (const s of archive.skipped) err.write(`  skipped ${s.file}: ${s.reason}\n`);
    if (archive.reordered.length > 0) err.write(`  ${archive.reordered.length} file(s) were out of name order and are taken in time order\n`);
    if (archive.entries.length === 0) { err.write(`helicord replay: ${folder} has no usable frame\n`); return 1; }
    from = { archive };
  } else {
    if (Object.keys(componentSettingsFrom(args)).length > 0) throw new Error('the component options read the files of a FOLDER; --from-region replays frames already stored');
    from = { region: fromRegion! };
  }

  const monitor = await serve({ ...monitorOptions(args, out), replays: [{ region, from, speed, ...(settings && { settings }) }] });
  return runUntilSignal(monitor, out, ` (region ${region} is being replayed)`);
}
