// Whether the monitor's writes fail for lack of space: since when and what failed last (the
// health answer and every region's status report it). A full disk is waited out, never fatal:
// the first successful write after it says that space is back.
//
//   const disk = new DiskStatus(log, quiet);
//   disk.full('a frame for ar1', err); disk.isFull; // true
//   disk.writeOk();                                  // logs "disk space is back (...)"

import type { QuietLog } from './quietLog.js';

export class DiskStatus {
  private fullSince: { since: number; what: string } | undefined;

  constructor(private readonly log: (line: string) => void, private readonly quiet: QuietLog) {}

  get isFull(): boolean {
    return this.fullSince !== undefined;
  }

  /** A write failed for lack of space: `what` waits for space. */
  full(what: string, e: unknown): void {
    if (!this.fullSince) this.fullSince = { since: Date.now(), what };
    else this.fullSince = { ...this.fullSince, what };
    this.quiet.say('disk', `the disk is full: ${what} waits for space (${String((e as Error)?.message ?? e).split('\n')[0]})`);
  }

  /** A write succeeded. */
  writeOk(): void {
    if (this.fullSince) {
      this.log(`disk space is back (full since ${new Date(this.fullSince.since).toISOString()})`);
      this.fullSince = undefined;
    }
  }

  state(): { full: boolean; since: string | null; what: string | null } {
    const d = this.fullSince;
    return { full: d !== undefined, since: d ? new Date(d.since).toISOString() : null, what: d?.what ?? null };
  }
}
