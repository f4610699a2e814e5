// The command line: `helicord <command> [options]`. Each command composes core and the server;
// none computes on its own.

import { PROCESS_HELP, SYNTH_HELP, processCli, synthCli } from './commands/batch.js';
import { parseArgs, type ParsedArgs } from './commands/args.js';
import { rateCommand } from './commands/rate.js';
import { REPLAY_HELP, replayCommand } from './commands/replayCommand.js';
import { serveCommand } from './commands/serveCommand.js';

export const HELP = `helicord — live monitor of magnetic-helicity injection through the photosphere

Usage: helicord <command> [options]

Commands:
  serve [--data DIR] [--port N] [--host H] [--demo] [--read-token] [--workers N] [--allow-host H]
        [--queue-limit N] [--max-frame-pixels N] [--intake-memory-mb N]
        Start the monitor (HTTP + WebSocket, 127.0.0.1:8750 by default). --demo adds the built-in
        synthetic demo region, streaming live. Data are kept in DIR (default ./data); the ingest
        token is created there at first start and printed once (or set HELICORD_TOKEN).
        --read-token makes reading need the token too. --allow-host NAME[,NAME] answers those
        host names besides the loopback ones; --queue-limit N (16) frames may wait per region
        before senders are held back (503 / a paused socket); --max-frame-pixels N (4194304 =
        2048^2) is the largest frame; --intake-memory-mb N (1024) bounds the frame reader.
  rate FRAME [FRAME ...] [--labels detect|from-file|none|FILE.json] [--footpoints]
       [--method auto|dave|dave4vm|lct] [--window SIGMA_PX] [--noise G]
        Helicity injection rate printed as JSON (Mx^2/s): total, total_ga, spin, orbit,
        background, and emergence, shear with vector data. One frame must carry its velocity;
        with frames that carry none, the velocity is inferred between the last two (--method,
        default auto: dave4vm with bx, by, else dave) and the rate is at their mid-time. A
        sequence (any number of frames, taken in time order) is tracked through: footpoint ids
        and windings follow, footpoint motions are measured over the 720 s motion baseline;
        the last frame's sample is printed and sample_frames names the frames it came from.
        Footpoints are detected and tracked unless the frame has labels (--labels from-file) or
        --labels none; --footpoints adds the footpoint table, events and pair matrices.
        FRAME is a JSON or FITS frame (see README).
${REPLAY_HELP}
${PROCESS_HELP}
${SYNTH_HELP}
  help  This text.

These are research indicators, not forecasts: for operational decisions use the official
space-weather services.
`;

type Command = (args: ParsedArgs, out: NodeJS.WritableStream, err: NodeJS.WritableStream) => Promise<number>;

const COMMANDS: Record<string, Command> = {
  serve: serveCommand,
  rate: rateCommand,
  replay: replayCommand,
  process: processCli,
  synth: synthCli,
};

export async function main(argv: string[], out: NodeJS.WritableStream = process.stdout, err: NodeJS.WritableStream = process.stderr): Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined || name === 'help' || name === '--help' || name === '-h') {
    out.write(HELP);
    return name === undefined ? 2 : 0;
  }
  const command = COMMANDS[name];
  if (!command) {
    err.write(`helicord: unknown command "${name}". Run \`helicord --help\` for the list.\n`);
    return 2;
  }
  let args: ParsedArgs;
  try {
    args = parseArgs(rest);
  } catch (e) {
    err.write(`helicord ${name}: ${(e as Error).message}\n`);
    return 2;
  }
  if (args.flags.help) {
    out.write(HELP);
    return 0;
  }
  try {
    return await command(args, out, err);
  } catch (e) {
    err.write(`helicord ${name}: ${(e as Error).message}\n`);
    return 1;
  }
}
