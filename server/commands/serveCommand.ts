// `helicord serve`: starts the monitor and keeps it running until SIGINT or SIGTERM. The monitor
// options and the run-until-signal step are shared with `helicord replay`.
import type { RunningMonitor, ServeOptions } from '../serve.js';
import { serve } from '../serve.js';
import type { ParsedArgs } from './args.js';
import { numberFlag, stringFlag } from './args.js';

/** The port when none is given. */
export const DEFAULT_PORT = 8750;

const CAUTION = 'Research indicators, not forecasts: for operational decisions use the official space-weather services.\n';

/** A positive integer option, or undefined when absent. */
function positiveInteger(args: ParsedArgs, name: string): number | undefined {
  const v = numberFlag(args, name);
  if (v !== undefined && (!Number.isInteger(v) || v < 1)) throw new Error(`option --${name} must be a positive integer, got ${v}`);
  return v;
}

/**
 * The options every command that starts the monitor takes: --data, --port, --host, --workers,
 * --read-token, --replay-root, --allow-host (repeatable as a comma list), --queue-limit,
 * --max-frame-pixels, --intake-memory-mb.
 */
export function monitorOptions(args: ParsedArgs, out: NodeJS.WritableStream): ServeOptions {
  const port = numberFlag(args, 'port', DEFAULT_PORT)!;
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`option --port must be a TCP port (0-65535), got ${port}`);
  const workers = numberFlag(args, 'workers');
  const host = stringFlag(args, 'host');
  const replayRoot = stringFlag(args, 'replay-root');
  const allowHost = stringFlag(args, 'allow-host');
  const queueLimit = positiveInteger(args, 'queue-limit');
  const maxFramePixels = positiveInteger(args, 'max-frame-pixels');
  const intakeMemoryMb = positiveInteger(args, 'intake-memory-mb');
  return {
    dataDir: stringFlag(args, 'data', './data')!,
    port,
    ...(host !== undefined && { host }),
    readToken: args.flags['read-token'] === true,
    ...(workers !== undefined && { workers }),
    ...(replayRoot !== undefined && { replayRoot }),
    ...(allowHost !== undefined && { allowedHosts: allowHost.split(',').map((h) => h.trim()).filter(Boolean) }),
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
  if (args.positional.length > 0) throw new Error(`serve takes no file names, got "${args.positional[0]}"`);
  const monitor = await serve({ ...monitorOptions(args, out), demo: args.flags.demo === true });
  return runUntilSignal(monitor, out);
}
