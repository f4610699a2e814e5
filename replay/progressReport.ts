// Progress of a batch run on its stream (stderr by default, never the CSV): a bar with the rate
// and the time left (cli-progress) on a terminal, plain lines at every tenth otherwise.

import cliProgress from 'cli-progress';

export interface ProgressReport {
  /** Starts a phase of `total` steps ('reading', 'analysing'). */
  start(phase: string, total: number): void;
  /** One more step done. */
  tick(): void;
  /** Ends the phase. */
  stop(): void;
  /** A line of text (outside any bar). */
  line(text: string): void;
}

/** "1m57s", "42s", "3h05m". */
export function formatElapsed(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '?';
  const s = Math.round(seconds);
  if (s < 60) return `${s}s`;
  if (s < 3600) return `${Math.floor(s / 60)}m${String(s % 60).padStart(2, '0')}s`;
  return `${Math.floor(s / 3600)}h${String(Math.floor((s % 3600) / 60)).padStart(2, '0')}m`;
}

function isTerminal(stream: NodeJS.WritableStream): boolean {
  return (stream as { isTTY?: boolean }).isTTY === true;
}

export function progressReport(stream: NodeJS.WritableStream = process.stderr, now: () => number = Date.now): ProgressReport {
  let phase = '', total = 0, done = 0, started = 0, lastTenth = -1;
  let bar: cliProgress.SingleBar | undefined;
  const rate = () => { const s = (now() - started) / 1000; return s > 0 ? done / s : 0; };
  return {
    start(p, t) {
      phase = p; total = t; done = 0; started = now(); lastTenth = 0;
      if (isTerminal(stream)) {
        bar = new cliProgress.SingleBar({
          stream,
          format: `${p.padEnd(9)} [{bar}] {percentage}% | {value}/{total} frames | {speed} frames/s | ETA {eta_formatted}`,
          hideCursor: true, etaBuffer: 20, fps: 10, clearOnComplete: false,
        }, cliProgress.Presets.shades_classic);
        bar.start(t, 0, { speed: '0.0' });
      } else {
        stream.write(`${p}: 0/${t} frames\n`);
      }
    },
    tick() {
      done++;
      if (bar) { bar.update(done, { speed: rate().toFixed(1) }); return; }
      const tenth = total > 0 ? Math.floor((10 * done) / total) : 10;
      if (tenth > lastTenth || done === total) {
        lastTenth = tenth;
        const r = rate();
        const left = r > 0 ? (total - done) / r : NaN;
        stream.write(`${phase}: ${done}/${total} frames (${Math.round((100 * done) / Math.max(total, 1))}%), ${r.toFixed(1)} frames/s${done < total ? `, about ${formatElapsed(left)} left` : `, ${formatElapsed((now() - started) / 1000)} in all`}\n`);
      }
    },
    stop() {
      if (bar) { bar.stop(); bar = undefined; }
    },
    line(text) {
      stream.write(text.endsWith('\n') ? text : text + '\n');
    },
  };
}
