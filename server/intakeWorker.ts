// The intake worker: parses and encodes frames off the event loop (see frameIntake.ts).
import { parentPort } from 'node:worker_threads';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { InputError } from '../core/inputError.js';
import { loadFrameFile } from '../replay/frameFiles.js';
import { frameFromInput, intakeFrame, intakeStatus } from './frameIntake.js';
import type { IntakeReply, IntakeRequest } from './intakePool.js';

async function handle(req: IntakeRequest): Promise<IntakeReply> {
  try {
    const settings = (req.settings ?? {}) as FrameAssemblySettings;
    const frame = req.kind === 'file'
      ? await loadFrameFile(req.path, settings)
      : frameFromInput(req.kind === 'json' ? { kind: 'json', text: Buffer.from(req.bytes).toString('utf8') } : { kind: 'fits', bytes: req.bytes }, req.source, settings);
    const intake = intakeFrame(frame, req.source);
    return { id: req.id, ok: true, meta: intake.meta, hash: intake.hash, bytes: intake.bytes };
  } catch (e) {
    if (e instanceof InputError) return { id: req.id, ok: false, status: intakeStatus(e), error: { source: e.source, field: e.field, problem: e.problem } };
    return { id: req.id, ok: false, status: 400, error: { source: req.source, field: '(body)', problem: String((e as Error).message ?? e) } };
  }
}

parentPort!.on('message', (req: IntakeRequest) => {
  void handle(req).then((reply) => {
    const transfer = reply.ok ? [reply.bytes.buffer as ArrayBuffer] : [];
    parentPort!.postMessage(reply, transfer);
  });
});
