// A log that says a line of one kind at most once a minute (failed writes repeat at every frame
// while the disk is full; one line a minute says as much).
//
//   const quiet = new QuietLog(console.log);
//   quiet.say('disk', 'the disk is full'); // logged; the same kind again within 60 s is not

export class QuietLog {
  private readonly until = new Map<string, number>();

  constructor(private readonly log: (line: string) => void, private readonly everyMs = 60_000, private readonly now: () => number = Date.now) {}

  say(kind: string, line: string): void {
    const t = this.now();
    if ((this.until.get(kind) ?? 0) > t) return;
    this.until.set(kind, t + this.everyMs);
    this.log(line);
  }
}
