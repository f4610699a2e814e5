// A child process that answers requests by id and is replaced when it dies, like
// RestartingWorker (restartingWorker.ts) but in its own process: its memory is bounded by V8's
// heap limit (--max-old-space-size), and a request that passes it ends that process only. (A
// worker thread's resourceLimits do not give that guarantee: a thread reaching its heap limit
// during garbage collection can abort the whole process.) Messages use the structured-clone
// serialisation, so typed arrays cross as they are.
import { fork } from 'node:child_process';
import type { ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';

/** A process that lived less than this long before dying is restarted only after the same pause. */
const YOUNG_MS = 1000;

export class RestartingProcess<Req extends { readonly id: number }, Reply extends { readonly id: number }> {
  private child!: ChildProcess;
  private started = 0;
  private readonly pending = new Map<number, { resolve: (r: Reply) => void; reject: (e: Error) => void }>();
  private closed = false;
  private waiting: Req[] | null = null;
  /** The end of the child's error output (to tell why it died). */
  private stderrTail = '';

  constructor(
    private readonly url: URL, private readonly name: string, private readonly heapMb: number,
    private readonly log: (line: string) => void = () => undefined,
  ) {
    this.spawn();
  }

  private spawn(): void {
    const child = fork(fileURLToPath(this.url), [], {
      execArgv: [`--max-old-space-size=${this.heapMb}`],
      serialization: 'advanced',
      stdio: ['ignore', 'ignore', 'pipe', 'ipc'],
    });
    this.child = child;
    this.started = Date.now();
    this.stderrTail = '';
    child.stderr!.on('data', (d: Buffer) => { this.stderrTail = (this.stderrTail + d.toString('utf8')).slice(-2000); });
    const held = this.waiting ?? [];
    this.waiting = null;
    for (const req of held) this.post(child, req);
    child.on('message', (reply: Reply) => {
      const p = this.pending.get(reply.id);
      if (!p) return;
      this.pending.delete(reply.id);
      p.resolve(reply);
    });
    let failed = false;
    const fail = (why: string) => {
      if (this.closed || failed) return;
      failed = true;
      const oom = /heap out of memory|Reached heap limit/i.test(this.stderrTail);
      const reason = oom ? `out of memory (over its bound of ${this.heapMb} MiB)` : why;
      for (const [, p] of this.pending) p.reject(new Error(`${this.name} stopped: ${reason}`));
      this.pending.clear();
      this.log(`${this.name} stopped (${reason}); starting a new one`);
      if (Date.now() - this.started < YOUNG_MS) {
        this.waiting = [];
        setTimeout(() => { if (!this.closed) this.spawn(); }, YOUNG_MS).unref();
      } else this.spawn();
    };
    child.on('error', (e) => fail(e.message));
    child.on('exit', (code, signal) => fail(signal ? `signal ${signal}` : `exit code ${code}`));
  }

  private post(child: ChildProcess, req: Req): void {
    try {
      child.send(req, (e) => { if (e) this.pending.get(req.id)?.reject(new Error(`${this.name}: ${e.message}`)); });
    } catch (e) {
      this.pending.get(req.id)?.reject(e as Error);
    }
  }

  /** Sends `req` and resolves with the reply of the same id. */
  request(req: Req): Promise<Reply> {
    if (this.closed) return Promise.reject(new Error(`${this.name} is closed`));
    return new Promise<Reply>((resolve, reject) => {
      this.pending.set(req.id, { resolve, reject: (e) => { this.pending.delete(req.id); reject(e); } });
      if (this.waiting) this.waiting.push(req);
      else this.post(this.child, req);
    });
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
