// One intake worker (parsing is quick next to the analysis; one is enough to keep the event loop
// free). Requests are answered in the order they were sent. A worker that dies is replaced and
// its open requests are refused with the reason.
import { InputError } from '../core/inputError.js';
import type { Intake, IntakeMeta } from './frameIntake.js';
import { RestartingWorker, compiledWorkerUrl } from './restartingWorker.js';

/** `settings`: the region's component settings (FrameAssemblySettings of core/frameAssembly). */
export type IntakeJob =
  | { readonly kind: 'json' | 'fits'; readonly bytes: Uint8Array; readonly source: string; readonly settings?: Record<string, unknown> }
  | { readonly kind: 'file'; readonly path: string; readonly source: string; readonly settings?: Record<string, unknown> };

export type IntakeRequest = IntakeJob & { readonly id: number };

export type IntakeReply =
  | { readonly id: number; readonly ok: true; readonly meta: IntakeMeta; readonly hash: string; readonly bytes: Uint8Array }
  | { readonly id: number; readonly ok: false; readonly status: number; readonly error: { source: string; field: string; problem: string } };

export class IntakeRefusal extends Error {
  constructor(readonly status: number, readonly error: InputError) { super(error.message); }
}

export class IntakePool {
  private readonly worker: RestartingWorker<IntakeRequest, IntakeReply>;
  private nextId = 1;

  constructor(log: (line: string) => void = () => undefined) {
    this.worker = new RestartingWorker<IntakeRequest, IntakeReply>(compiledWorkerUrl('intakeWorker.js'), 'intake worker', log);
  }

  /** Parses and encodes; resolves with the intake or throws IntakeRefusal. */
  async take(req: IntakeJob): Promise<Intake> {
    const id = this.nextId++;
    const full = { ...req, id } as IntakeRequest;
    let reply: IntakeReply;
    try {
      if (full.kind === 'file') reply = await this.worker.request(full);
      else {
        // Hand the body over without copying when it owns its whole memory (a large request body
        // does); a slice of a shared pool is copied first. The body is not used after this.
        const b = full.bytes;
        const own = b.byteOffset === 0 && b.byteLength === b.buffer.byteLength && b.buffer instanceof ArrayBuffer;
        const bytes = own ? new Uint8Array(b.buffer) : new Uint8Array(b);
        reply = await this.worker.request({ ...full, bytes }, [bytes.buffer as ArrayBuffer]);
      }
    } catch (e) {
      reply = { id, ok: false, status: 500, error: { source: req.source, field: '(server)', problem: (e as Error).message } };
    }
    if (!reply.ok) throw new IntakeRefusal(reply.status, new InputError(reply.error.source, reply.error.field, reply.error.problem));
    return { meta: reply.meta, hash: reply.hash, bytes: reply.bytes };
  }

  async close(): Promise<void> {
    await this.worker.close();
  }
}
