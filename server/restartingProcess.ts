// A child process that answers requests by id and is replaced when it dies, like
// RestartingWorker (restartingWorker.ts; both restartingChild.ts) but in its own process: its
// memory is bounded by V8's heap limit (--max-old-space-size), and a request that passes it ends
// that process only. (A worker thread's resourceLimits do not give that guarantee: a thread
// reaching its heap limit during garbage collection can abort the whole process.) Messages use
// the structured-clone serialisation, so typed arrays cross as they are.
import { fork } from 'node:child_process';
import type { ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { RestartingChild } from './restartingChild.js';

export class RestartingProcess<Req extends { readonly id: number }, Reply extends { readonly id: number }> extends RestartingChild<Req, Reply, Req> {
  private child!: ChildProcess;
  /** The end of the child's error output (to tell why it died). */
  private stderrTail = '';

  constructor(private readonly url: URL, name: string, private readonly heapMb: number, log: (line: string) => void = () => undefined) {
    super(name, log);
    this.start();
  }

  protected launch(): void {
    const child = fork(fileURLToPath(this.url), [], {
      execArgv: [`--max-old-space-size=${this.heapMb}`],
      serialization: 'advanced',
      stdio: ['ignore', 'ignore', 'pipe', 'ipc'],
    });
    this.child = child;
    this.stderrTail = '';
    child.stderr!.on('data', (d: Buffer) => { this.stderrTail = (this.stderrTail + d.toString('utf8')).slice(-2000); });
    child.on('message', (reply: Reply) => this.replied(reply));
    const failed = this.failer();
    const fail = (why: string) => {
      const oom = /heap out of memory|Reached heap limit/i.test(this.stderrTail);
      failed(oom ? `out of memory (over its bound of ${this.heapMb} MiB)` : why);
    };
    child.on('error', (e) => fail(e.message));
    child.on('exit', (code, signal) => fail(signal ? `signal ${signal}` : `exit code ${code}`));
  }

  protected post(req: Req): void {
    try {
      this.child.send(req, (e) => { if (e) this.rejectOne(req.id, new Error(`${this.name}: ${e.message}`)); });
    } catch (e) {
      this.rejectOne(req.id, e as Error);
    }
  }

  /** Sends `req` and resolves with the reply of the same id. */
  request(req: Req): Promise<Reply> {
    return this.send(req.id, req);
  }

  /** The child's process id (tests). */
  get pid(): number | undefined {
    return this.child.pid;
  }

  async close(): Promise<void> {
    this.closed = true;
    const child = this.child;
    if (child.exitCode !== null || child.signalCode !== null) return;
    await new Promise<void>((r) => {
      child.once('exit', () => r());
      child.kill('SIGTERM');
      setTimeout(() => child.kill('SIGKILL'), 2000).unref();
    });
  }
}
