// `helicord serve`: starts the monitor and keeps it running until SIGINT or SIGTERM. The monitor
// options and the run-until-signal step are shared with `helicord replay`.
import type { RunningMonitor, ServeOptions } from '../serve.js';
import { serve } from '../serve.js';
import type { CommandSpec, OptionSpec, ParsedArgs } from './args.js';

/** The port when none is given. */
export const DEFAULT_PORT = 8750;

const CAUTION = 'Research indicators, not forecasts: for operational decisions use the official space-weather services.\n';

/** The options of every command that starts the monitor. */
export const MONITOR_OPTIONS: Readonly<Record<string, OptionSpec>> = {
  data: { kind: 'string', value: 'DIR', default: './data', help: 'the data folder: database, frame and map files, the token, inbox folders' },
  port: { kind: 'integer', value: 'N', min: 0, max: 65535, default: DEFAULT_PORT, help: 'TCP port (0 picks a free one; the address printed tells which)' },
  host: { kind: 'string', value: 'H', defaultText: '127.0.0.1', help: 'the interface to listen on' },
  'read-token': { kind: 'boolean', help: 'reading needs the token too (otherwise reading is open on loopback)' },
  workers: { kind: 'integer', value: 'N', min: 1, defaultText: 'one fewer than the cores, 1 to 4', help: 'compute workers' },
  'one-thread-per-frame': { kind: 'boolean', help: 'analyse each frame in one thread (by default, with two cores or more, a frame\'s velocity inference and footpoint split run on a second thread beside the rest)' },
  'cold-start': { kind: 'boolean', help: 'skip the warm-up (by default each compute thread first analyses a few small synthetic frames, a few seconds of CPU, so that the first real frames are analysed as fast as later ones)' },
  'allow-host': { kind: 'list', value: 'NAME', help: 'host names answered besides the loopback ones' },
  'queue-limit': { kind: 'integer', value: 'N', min: 1, defaultText: '16', help: 'frames that may wait per region before senders are held back (503 / a paused socket)' },
  'max-frame-pixels': { kind: 'integer', value: 'N', min: 1, defaultText: '4194304 = 2048^2', help: 'the largest frame accepted, pixels' },
  'intake-memory-mb': { kind: 'integer', value: 'N', min: 1, defaultText: '1024', help: 'memory bound of the frame reader, MiB' },
  'replay-root': { kind: 'string', value: 'DIR', help: 'lets the API start replays of folders under DIR' },
};

export const SERVE_SPEC: CommandSpec = {
  name: 'serve',
  usage: ['serve [--data DIR] [--port N] [--host H] [--demo] [options]'],
  summary: 'start the monitor (HTTP + WebSocket, 127.0.0.1:8750 by default)',
  description: 'Start the monitor (HTTP + WebSocket). Data are kept in the data folder; the ingest token is created there at first '
    + 'start and printed once (or set HELICORD_TOKEN). --demo adds the built-in synthetic demo region, streaming live. Runs until '
    + 'SIGINT or SIGTERM.',
  positionals: { min: 0, max: 0, what: 'no file names' },
  options: {
    demo: { kind: 'boolean', help: 'add the built-in synthetic demo region, streaming live' },
    ...MONITOR_OPTIONS,
  },
};

/** The monitor options of a command line (MONITOR_OPTIONS). */
export function monitorOptions(args: ParsedArgs, out: NodeJS.WritableStream): ServeOptions {
  const workers = args.number('workers');
  const host = args.string('host');
  const replayRoot = args.string('replay-root');
  const allowedHosts = args.list('allow-host');
  const queueLimit = args.number('queue-limit');
  const maxFramePixels = args.number('max-frame-pixels');
  const intakeMemoryMb = args.number('intake-memory-mb');
  return {
    dataDir: args.string('data')!,
    port: args.number('port')!,
    ...(host !== undefined && { host }),
    readToken: args.boolean('read-token'),
    ...(args.boolean('one-thread-per-frame') && { assistFrames: false }),
    warmUp: !args.boolean('cold-start'),
    ...(workers !== undefined && { workers }),
    ...(replayRoot !== undefined && { replayRoot }),
    ...(allowedHosts.length > 0 && { allowedHosts }),
    ...(queueLimit !== undefined && { queueLimit }),
    ...(maxFramePixels !== undefined && { maxFramePixels }),
    ...(intakeMemoryMb !== undefined && { intakeMemoryMb }),
    log: (line) => out.write(line + '\n'),
  };
}

/** Prints the address, waits for SIGINT or SIGTERM, then closes the monitor. */
export async function runUntilSignal(monitor: RunningMonitor, out: NodeJS.WritableStream, note = ''): Promise<number> {
  out.write(`helicord monitor running: open ${monitor.url}${note}\n`);
  out.write(CAUTION);
  await new Promise<void>((resolve) => {
    const stop = () => { process.off('SIGINT', stop); process.off('SIGTERM', stop); resolve(); };
    process.on('SIGINT', stop);
    process.on('SIGTERM', stop);
  });
  out.write('helicord monitor stopping...\n');
  await monitor.close();
  return 0;
}

export async function serveCommand(args: ParsedArgs, out: NodeJS.WritableStream): Promise<number> {
  const monitor = await serve({ ...monitorOptions(args, out), demo: args.boolean('demo') });
  return runUntilSignal(monitor, out);
}
