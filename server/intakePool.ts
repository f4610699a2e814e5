// One intake worker (parsing is quick next to the analysis; one is enough to keep the event loop
// free). Requests are answered in the order they were sent. A worker that dies is replaced and
// its open requests are refused with the reason.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { InputError } from '../core/inputError.js';
import type { Intake, IntakeMeta } from './frameIntake.js';

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

function workerUrl(): URL {
  const here = new URL('./intakeWorker.js', import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  return new URL('../dist/server/intakeWorker.js', import.meta.url);
}

export class IntakePool {
  private worker!: Worker;
  private readonly pending = new Map<number, { resolve: (r: IntakeReply) => void; source: string }>();
  private nextId = 1;
  private closed = false;

  constructor(private readonly log: (line: string) => void = () => undefined) {
    this.spawn();
  }

  private spawn(): void {
    this.worker = new Worker(workerUrl());
    this.worker.on('message', (reply: IntakeReply) => {
      const p = this.pending.get(reply.id);
      if (!p) return;
      this.pending.delete(reply.id);
      p.resolve(reply);
    });
    const fail = (why: string) => {
      if (this.closed) return;
      for (const [id, p] of this.pending) p.resolve({ id, ok: false, status: 500, error: { source: p.source, field: '(server)', problem: `the intake worker stopped (${why})` } });
      this.pending.clear();
      this.log(`intake worker stopped (${why}); starting a new one`);
      this.spawn();
    };
    this.worker.on('error', (e) => fail(e.message));
    this.worker.on('exit', (code) => fail(`exit code ${code}`));
  }

  /** Parses and encodes; resolves with the intake or throws IntakeRefusal. */
  async take(req: IntakeJob): Promise<Intake> {
    const id = this.nextId++;
    const full = { ...req, id } as IntakeRequest;
    const reply = await new Promise<IntakeReply>((resolve) => {
      this.pending.set(id, { resolve, source: req.source });
      if (full.kind === 'file') this.worker.postMessage(full);
      else {
        // Hand the body over without copying when it owns its whole memory (a large request body
        // does); a slice of a shared pool is copied first. The body is not used after this.
        const b = full.bytes;
        const own = b.byteOffset === 0 && b.byteLength === b.buffer.byteLength && b.buffer instanceof ArrayBuffer;
        const bytes = own ? new Uint8Array(b.buffer) : new Uint8Array(b);
        this.worker.postMessage({ ...full, bytes }, [bytes.buffer as ArrayBuffer]);
      }
    });
    if (!reply.ok) throw new IntakeRefusal(reply.status, new InputError(reply.error.source, reply.error.field, reply.error.problem));
    return { meta: reply.meta, hash: reply.hash, bytes: reply.bytes };
  }

  async close(): Promise<void> {
    this.closed = true;
    await this.worker.terminate();
  }
}
