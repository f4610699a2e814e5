// The intake worker: parses and encodes frames off the event loop, in its own process with a
// bounded heap (see frameIntake.ts, intakePool.ts). Watched
// files are opened without following links (a link in the inbox could point anywhere, such as
// the token file), only when they are regular files within the size bound.
import { constants } from 'node:fs';
import { open } from 'node:fs/promises';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { InputError } from '../core/inputError.js';
import { frameFromFileBytes } from '../replay/frameFiles.js';
import { checkIntake, frameFromInput, intakeFrame, intakeStatus, withPixelBudget } from './frameIntake.js';
import type { IntakeReply, IntakeRequest } from './intakePool.js';

/** Reads a watched file: no link followed, a regular file, at most `maxBytes`. */
async function readWatched(path: string, source: string, maxBytes: number): Promise<Uint8Array> {
  let fh;
  try {
    fh = await open(path, constants.O_RDONLY | constants.O_NOFOLLOW | constants.O_NONBLOCK);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ELOOP') throw new InputError(source, '(file)', 'is a symbolic link: links in a watched folder are not followed');
    throw new InputError(source, '(file)', `cannot be read: ${code ?? 'error'}`);
  }
  try {
    const st = await fh.stat();
    if (!st.isFile()) throw new InputError(source, '(file)', 'is not a regular file');
    if (st.size > maxBytes) throw new InputError(source, '(file)', `a file of ${st.size} bytes exceeds the limit of ${maxBytes} bytes`);
    const bytes = new Uint8Array(st.size);
    let got = 0;
    while (got < st.size) {
      const { bytesRead } = await fh.read(bytes, got, st.size - got, got);
      if (bytesRead === 0) break;
      got += bytesRead;
    }
    return got === st.size ? bytes : bytes.subarray(0, got);
  } finally {
    await fh.close();
  }
}

async function handle(req: IntakeRequest): Promise<IntakeReply> {
  try {
    const settings = withPixelBudget((req.settings ?? {}) as FrameAssemblySettings, req.maxPixels);
    const frame = req.kind === 'file'
      ? frameFromFileBytes(req.source, await readWatched(req.path, req.source, req.maxFileBytes), settings)
      : frameFromInput(req.kind === 'json' ? { kind: 'json', text: Buffer.from(req.bytes).toString('utf8') } : { kind: 'fits', bytes: req.bytes }, req.source, settings, req.maxPixels);
    if (req.kind === 'file' && req.peek) {
      checkIntake(frame, req.source);
      return { id: req.id, ok: true, meta: { time: frame.time, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy }, hash: '', bytes: new Uint8Array(0) };
    }
    const intake = intakeFrame(frame, req.source);
    return { id: req.id, ok: true, meta: intake.meta, hash: intake.hash, bytes: intake.bytes };
  } catch (e) {
    if (e instanceof InputError) return { id: req.id, ok: false, status: intakeStatus(e), error: { source: e.source, field: e.field, problem: e.problem } };
    return { id: req.id, ok: false, status: 400, error: { source: req.source, field: '(body)', problem: String((e as Error).message ?? e).slice(0, 300) } };
  }
}

process.on('message', (req: IntakeRequest) => {
  void handle(req).then((reply) => process.send!(reply));
});
// The monitor went away (even killed): nothing more to do.
process.on('disconnect', () => process.exit(0));
