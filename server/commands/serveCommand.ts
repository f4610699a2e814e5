// `helicord serve`: starts the monitor and keeps it running until SIGINT or SIGTERM.
import { serve } from '../serve.js';
import type { ParsedArgs } from './args.js';
import { numberFlag, stringFlag } from './args.js';

/** The port when none is given. */
export const DEFAULT_PORT = 8750;

export async function serveCommand(args: ParsedArgs, out: NodeJS.WritableStream): Promise<number> {
  if (args.positional.length > 0) throw new Error(`serve takes no file names, got "${args.positional[0]}"`);
  const port = numberFlag(args, 'port', DEFAULT_PORT)!;
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`option --port must be a TCP port (0-65535), got ${port}`);
  const workers = numberFlag(args, 'workers');
  const host = stringFlag(args, 'host');
  const monitor = await serve({
    dataDir: stringFlag(args, 'data', './data')!,
    port,
    ...(host !== undefined && { host }),
    demo: args.flags.demo === true,
    readToken: args.flags['read-token'] === true,
    ...(workers !== undefined && { workers }),
    log: (line) => out.write(line + '\n'),
  });
  out.write(`helicord monitor running: open ${monitor.url}\n`);
  out.write('Research indicators, not forecasts: for operational decisions use the official space-weather services.\n');
  await new Promise<void>((resolve) => {
    const stop = () => { process.off('SIGINT', stop); process.off('SIGTERM', stop); resolve(); };
    process.on('SIGINT', stop);
    process.on('SIGTERM', stop);
  });
  out.write('helicord monitor stopping...\n');
  await monitor.close();
  return 0;
}
