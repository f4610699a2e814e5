// One worker thread that answers requests by id and is replaced when it dies: its open requests
// are rejected with the reason, the loss is logged, and a new thread starts (after a pause when
// the last one died young, so a worker that cannot start does not spin). Shared by the compute
// pool and the intake pool.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';

/** The compiled worker `file` beside the server's modules; from the TypeScript sources (tests) dist/server/. */
export function compiledWorkerUrl(file: string): URL {
  const here = new URL(`./${file}`, import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  const dist = new URL(`../dist/server/${file}`, import.meta.url);
  if (existsSync(fileURLToPath(dist))) return dist;
  throw new Error(`the compiled worker ${file} is missing (${fileURLToPath(here)}); run \`npm run build\``);
}

/** A thread that lived less than this long before dying is restarted only after the same pause. */
const YOUNG_MS = 1000;

export class RestartingWorker<Req extends { readonly id: number }, Reply extends { readonly id: number }> {
  private worker!: Worker;
  private started = 0;
  private readonly pending = new Map<number, { resolve: (r: Reply) => void; reject: (e: Error) => void }>();
  private closed = false;
  /** Requests sent while a replacement waits to start, posted when it does. */
  private waiting: { req: Req; transfer: ArrayBuffer[] }[] | null = null;

  /** `onLost` runs after a thread died, before its replacement takes requests. */
  constructor(
    private readonly url: URL, private readonly name: string,
    private readonly log: (line: string) => void = () => undefined, private readonly onLost: () => void = () => undefined,
  ) {
    this.spawn();
  }

  private spawn(): void {
    // execArgv [] : flags such as -e of the parent process must not reach the worker.
    const worker = new Worker(this.url, { execArgv: [] });
    this.worker = worker;
    this.started = Date.now();
    const held = this.waiting ?? [];
    this.waiting = null;
    for (const { req, transfer } of held) worker.postMessage(req, transfer);
    worker.on('message', (reply: Reply) => {
      const p = this.pending.get(reply.id);
      if (!p) return;
      this.pending.delete(reply.id);
      p.resolve(reply);
    });
    let failed = false;
    const fail = (why: string) => {
      if (this.closed || failed) return;
      failed = true;
      for (const [, p] of this.pending) p.reject(new Error(`${this.name} stopped: ${why}`));
      this.pending.clear();
      this.onLost();
      const lived = Date.now() - this.started;
      this.log(`${this.name} stopped (${why}); starting a new one`);
      if (lived < YOUNG_MS) {
        this.waiting = [];
        setTimeout(() => { if (!this.closed) this.spawn(); }, YOUNG_MS).unref();
      } else this.spawn();
    };
    worker.on('error', (e) => fail(e.message));
    worker.on('exit', (code) => fail(`exit code ${code}`));
  }

  /** Sends `req` (transferring `transfer`) and resolves with the reply of the same id. */
  request(req: Req, transfer: ArrayBuffer[] = []): Promise<Reply> {
    if (this.closed) return Promise.reject(new Error(`${this.name} is closed`));
    return new Promise<Reply>((resolve, reject) => {
      this.pending.set(req.id, { resolve, reject });
      if (this.waiting) this.waiting.push({ req, transfer });
      else this.worker.postMessage(req, transfer);
    });
  }

  /** Ends the current thread as if it had died (it is replaced). */
  terminate(): Promise<number> {
    return this.worker.terminate();
  }

  async close(): Promise<void> {
    this.closed = true;
    await this.worker.terminate();
  }
}
