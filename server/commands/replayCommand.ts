// `helicord replay`: starts the monitor (as `serve` does) and feeds an archive folder, or the
// stored frames of a region, into a region at a chosen speed, through the same pipeline as live
// ingest; the page and POST /api/regions/:region/replay steer it. Runs until SIGINT or SIGTERM.
import { readBatchConfig } from '../../replay/processCommand.js';
import { openArchive } from '../../replay/archiveSource.js';
import type { ReplayStart } from '../replayFeeds.js';
import { serve } from '../serve.js';
import type { ParsedArgs } from './args.js';
import { numberFlag, stringFlag } from './args.js';
import { monitorOptions, runUntilSignal } from './serveCommand.js';

export const REPLAY_HELP = `  replay FOLDER --region NAME [--speed X] [--config FILE] [--data DIR] [--port N] [--host H]
         [--workers N] [--read-token] [--replay-root DIR]
  replay --from-region OLD --region NEW [--config FILE] [--speed X] [...]
        Start the monitor and feed the frames of FOLDER (JSON and FITS frames, read and ordered as
        by process; unreadable files are reported and skipped) into region NAME at X times their
        own cadence (default 1; 0 = as fast as the pipeline takes them). With --from-region the
        stored frames of region OLD are replayed into a new region NEW beside it, with the
        settings of --config FILE (as for process: analysis, budget, rules). Pause, resume, seek
        and speed from the page or POST /api/regions/NAME/replay. --replay-root DIR lets the API
        start replays of folders under DIR.`;

export async function replayCommand(args: ParsedArgs, out: NodeJS.WritableStream, err: NodeJS.WritableStream): Promise<number> {
  const region = stringFlag(args, 'region');
  if (region === undefined) throw new Error('replay needs --region NAME (the region the frames go into)');
  const fromRegion = stringFlag(args, 'from-region');
  if (args.positional.length > 1) throw new Error(`replay takes one folder, got ${args.positional.length}`);
  const folder = args.positional[0];
  if ((folder === undefined) === (fromRegion === undefined)) throw new Error('replay needs either a FOLDER or --from-region OLD (not both)');
  const speed = numberFlag(args, 'speed', 1)!;
  if (speed < 0) throw new Error(`option --speed must be 0 (as fast as possible) or a positive factor, got ${speed}`);
  const configFile = stringFlag(args, 'config');
  let settings: Record<string, unknown> | undefined;
  if (configFile !== undefined) {
    const c = await readBatchConfig(configFile);
    settings = { analysis: c.analysis, budget: c.budget, rules: c.rules };
  }

  let from: ReplayStart['from'];
  if (folder !== undefined) {
    const archive = await openArchive(folder);
    err.write(`${folder}: ${archive.entries.length} frame${archive.entries.length === 1 ? '' : 's'} to replay, skipped ${archive.skipped.length}\n`);
    for (const s of archive.skipped) err.write(`  skipped ${s.file}: ${s.reason}\n`);
    if (archive.reordered.length > 0) err.write(`  ${archive.reordered.length} file(s) were out of name order and are taken in time order\n`);
    if (archive.entries.length === 0) { err.write(`helicord replay: ${folder} has no usable frame\n`); return 1; }
    from = { archive };
  } else {
    from = { region: fromRegion! };
  }

  const monitor = await serve({ ...monitorOptions(args, out), replays: [{ region, from, speed, ...(settings && { settings }) }] });
  return runUntilSignal(monitor, out, ` (region ${region} is being replayed)`);
}
