// One intake worker (parsing is quick next to the analysis; one is enough to keep the event loop
// free), in its own process so that its memory is bounded (server/restartingProcess.ts).
// Requests go to it one at a time, in the order they were made, so that a request that kills it
// (over its memory bound) takes no other request with it: that one is refused (413) and the
// worker is replaced. Every frame is held to a pixel budget, checked before anything is
// decompressed or allocated (docs/server.md).
import { InputError } from '../core/inputError.js';
import type { Intake, IntakeMeta } from './frameIntake.js';
import { RestartingProcess } from './restartingProcess.js';
import { compiledWorkerUrl } from './restartingWorker.js';

/** Default pixel budget of a frame: 2048^2 (the largest frame the analysis is sized for). */
export const DEFAULT_MAX_FRAME_PIXELS = 2048 * 2048;
/** Default heap bound of the intake worker, MiB: a 2048^2 JSON frame with bn, vx, vy parses in about half of it. */
export const DEFAULT_INTAKE_MEMORY_MB = 1024;

/** `settings`: the region's component settings (FrameAssemblySettings of core/frameAssembly). */
export type IntakeJob =
  | { readonly kind: 'json' | 'fits'; readonly bytes: Uint8Array; readonly source: string; readonly settings?: Record<string, unknown> }
  /** `peek`: read and check only (the frame's time for ordering a watched folder), nothing encoded. */
  | { readonly kind: 'file'; readonly path: string; readonly source: string; readonly settings?: Record<string, unknown>; readonly peek?: boolean };

export type IntakeRequest = IntakeJob & { readonly id: number; readonly maxPixels: number; readonly maxFileBytes: number };

export type IntakeReply =
  | { readonly id: number; readonly ok: true; readonly meta: IntakeMeta; readonly hash: string; readonly bytes: Uint8Array }
  | { readonly id: number; readonly ok: false; readonly status: number; readonly error: { source: string; field: string; problem: string } };

export class IntakeRefusal extends Error {
  constructor(readonly status: number, readonly error: InputError) { super(error.message); }
}

export interface IntakeOptions {
  /** Largest frame, in pixels. */
  readonly maxFramePixels?: number;
  /** Heap bound of the worker, MiB. */
  readonly memoryMb?: number;
  /** Largest frame file read from a watched folder, bytes. */
  readonly maxFileBytes?: number;
}

export class IntakePool {
  private readonly worker: RestartingProcess<IntakeRequest, IntakeReply>;
  private nextId = 1;
  /** One request at a time: the tail of the line. */
  private line: Promise<unknown> = Promise.resolve();
  readonly maxFramePixels: number;
  readonly memoryMb: number;
  readonly maxFileBytes: number;

  constructor(log: (line: string) => void = () => undefined, options: IntakeOptions = {}) {
    this.maxFramePixels = options.maxFramePixels ?? DEFAULT_MAX_FRAME_PIXELS;
    this.memoryMb = options.memoryMb ?? DEFAULT_INTAKE_MEMORY_MB;
    this.maxFileBytes = options.maxFileBytes ?? 256 * 1024 * 1024;
    this.worker = new RestartingProcess<IntakeRequest, IntakeReply>(compiledWorkerUrl('intakeWorker.js'), 'intake worker', this.memoryMb, log);
  }

  /** Parses and encodes; resolves with the intake or throws IntakeRefusal. */
  take(req: IntakeJob): Promise<Intake> {
    const run = this.line.then(() => this.send(req));
    this.line = run.catch(() => undefined);
    return run;
  }

  private async send(req: IntakeJob): Promise<Intake> {
    const id = this.nextId++;
    const full = { ...req, id, maxPixels: this.maxFramePixels, maxFileBytes: this.maxFileBytes } as IntakeRequest;
    let reply: IntakeReply;
    try {
      reply = await this.worker.request(full);
    } catch (e) {
      const message = (e as Error).message;
      // Only this request was in the worker: it is the one that needed too much memory.
      const oom = /out of memory/i.test(message);
      reply = oom
        ? { id, ok: false, status: 413, error: { source: req.source, field: '(body)', problem: `reading it needs more memory than the intake worker's bound of ${this.memoryMb} MiB` } }
        : { id, ok: false, status: 500, error: { source: req.source, field: '(server)', problem: message } };
    }
    if (!reply.ok) throw new IntakeRefusal(reply.status, new InputError(reply.error.source, reply.error.field, reply.error.problem));
    return { meta: reply.meta, hash: reply.hash, bytes: reply.bytes };
  }

  async close(): Promise<void> {
    await this.worker.close();
  }
}
