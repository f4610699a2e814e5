// What a worker thread (restartingWorker.ts) and a child process (restartingProcess.ts) that answer
// requests by id have in common: replies matched to their requests, and a replacement when the
// thread or process dies - its open requests rejected with the reason, the loss logged, a new one
// started at once, or after a pause when the last one died young (so that one that cannot start
// does not spin), the requests sent meanwhile held and posted when it starts.

/** A thread or process that lived less than this long before dying is restarted only after the same pause. */
const YOUNG_MS = 1000;

export abstract class RestartingChild<Req extends { readonly id: number }, Reply extends { readonly id: number }, Post> {
  private started = 0;
  private readonly pending = new Map<number, { resolve: (r: Reply) => void; reject: (e: Error) => void }>();
  /** Requests sent while a replacement waits to start, posted when it does. */
  private waiting: Post[] | null = null;
  protected closed = false;

  /** `onLost` runs after a thread or process died, before its replacement takes requests. */
  protected constructor(
    protected readonly name: string, protected readonly log: (line: string) => void,
    private readonly onLost: () => void = () => undefined,
  ) {}

  /** Starts a new thread or process, wired to `replied` and to `failer()`. */
  protected abstract launch(): void;

  /** Hands one request to the running thread or process. */
  protected abstract post(item: Post): void;

  /** Starts the first one (the subclass calls it once its own fields are set) or a replacement. */
  protected start(): void {
    this.launch();
    this.started = Date.now();
    const held = this.waiting ?? [];
    this.waiting = null;
    for (const item of held) this.post(item);
  }

  /** A reply from the thread or process: settles the request of the same id. */
  protected replied(reply: Reply): void {
    const p = this.pending.get(reply.id);
    if (!p) return;
    this.pending.delete(reply.id);
    p.resolve(reply);
  }

  /** Rejects one open request (a request that could not be handed over). */
  protected rejectOne(id: number, e: Error): void {
    this.pending.get(id)?.reject(e);
  }

  /** For one launched thread or process: what to call when it died (the first call counts). */
  protected failer(): (why: string) => void {
    let failed = false;
    return (why) => {
      if (this.closed || failed) return;
      failed = true;
      const open = [...this.pending.values()];
      this.pending.clear();
      for (const p of open) p.reject(new Error(`${this.name} stopped: ${why}`));
      this.onLost();
      this.log(`${this.name} stopped (${why}); starting a new one`);
      if (Date.now() - this.started < YOUNG_MS) {
        this.waiting = [];
        setTimeout(() => { if (!this.closed) this.start(); }, YOUNG_MS).unref();
      } else this.start();
    };
  }

  /** Sends a request and resolves with the reply of the same id. */
  protected send(id: number, item: Post): Promise<Reply> {
    if (this.closed) return Promise.reject(new Error(`${this.name} is closed`));
    return new Promise<Reply>((resolve, reject) => {
      this.pending.set(id, { resolve, reject: (e) => { this.pending.delete(id); reject(e); } });
      if (this.waiting) this.waiting.push(item);
      else this.post(item);
    });
  }
}
