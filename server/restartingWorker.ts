// One worker thread that answers requests by id and is replaced when it dies: its open requests
// are rejected with the reason, the loss is logged, and a new thread starts (after a pause when
// the last one died young, so a worker that cannot start does not spin; restartingChild.ts).
// Shared by the compute pool.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { RestartingChild } from './restartingChild.js';

/** The compiled worker `file` beside the server's modules; from the TypeScript sources (tests) dist/server/. */
export function compiledWorkerUrl(file: string): URL {
  const here = new URL(`./${file}`, import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  const dist = new URL(`../dist/server/${file}`, import.meta.url);
  if (existsSync(fileURLToPath(dist))) return dist;
  throw new Error(`the compiled worker ${file} is missing (${fileURLToPath(here)}); run \`npm run build\``);
}

export class RestartingWorker<Req extends { readonly id: number }, Reply extends { readonly id: number }>
  extends RestartingChild<Req, Reply, { req: Req; transfer: ArrayBuffer[] }> {
  private worker!: Worker;

  /**
   * `onLost` runs after a thread died, before its replacement takes requests. `thread.workerData`
   * is given to every thread started (the first and each replacement); `thread.onNotice` gets the
   * messages that answer no request (a reply's id is a positive integer; a notice has id 0).
   */
  constructor(
    private readonly url: URL, name: string, log: (line: string) => void = () => undefined, onLost: () => void = () => undefined,
    private readonly thread: { readonly workerData?: unknown; readonly onNotice?: (message: Reply) => void } = {},
  ) {
    super(name, log, onLost);
    this.start();
  }

  protected launch(): void {
    // execArgv [] : flags such as -e of the parent process must not reach the worker.
    const worker = new Worker(this.url, { execArgv: [], ...(this.thread.workerData !== undefined && { workerData: this.thread.workerData }) });
    this.worker = worker;
    worker.on('message', (reply: Reply) => {
      if (reply.id === 0) this.thread.onNotice?.(reply);
      else this.replied(reply);
    });
    const fail = this.failer();
    worker.on('error', (e) => fail(e.message));
    worker.on('exit', (code) => fail(`exit code ${code}`));
  }

  protected post({ req, transfer }: { req: Req; transfer: ArrayBuffer[] }): void {
    this.worker.postMessage(req, transfer);
  }

  /** Sends `req` (transferring `transfer`) and resolves with the reply of the same id. */
  request(req: Req, transfer: ArrayBuffer[] = []): Promise<Reply> {
    return this.send(req.id, { req, transfer });
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
