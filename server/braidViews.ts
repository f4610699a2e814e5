// The braid of each region's footpoints as the monitor's API shows it (docs/api.md, docs/braids.md):
// the braid fold (core/braid/braidHistory.ts) over the footpoint tables the store holds, frame by
// frame in time order. It is a view of what is stored, not a state of its own: a region's history
// is extended with the frames processed since the last look, and folded again from the start when
// the frames it was built on are no longer the stored ones (a late frame put in order, a frame
// removed, a reset), so it always equals the fold over the region as stored.

import type { FootpointAnalysis } from '../core/footpoints/analyseFootpoints.js';
import type { FootpointReport } from '../core/footpoints/footpointReport.js';
import type { BraidHistory } from '../core/braid/braidHistory.js';
import { emptyBraidHistory, extendBraidHistory } from '../core/braid/braidHistory.js';
import type { BraidSettings } from '../core/braid/braidTracker.js';
import type { Store } from './store.js';

/** Frames folded between two turns of the event loop: the fold runs on the server's thread (about 5 ms a frame for 5 strands), so a long region is folded in slices and requests go on meanwhile. */
const SLICE = 64;

export class BraidViews {
  private readonly histories = new Map<string, { settings: string; history: BraidHistory<number> }>();
  /** One fold at a time per region: a second request waits for the first and extends its result. */
  private readonly folding = new Map<string, Promise<unknown>>();

  constructor(private readonly store: Store) {}

  /** The region's braid history over its stored frames, brought up to date. */
  history(region: string, settings: BraidSettings = {}): Promise<BraidHistory<number>> {
    const run = (this.folding.get(region) ?? Promise.resolve()).catch(() => undefined).then(() => this.bringUpToDate(region, settings));
    this.folding.set(region, run);
    void run.finally(() => { if (this.folding.get(region) === run) this.folding.delete(region); }).catch(() => undefined);
    return run;
  }

  /** Forgets a region (removed or renamed). */
  forget(region: string): void {
    this.histories.delete(region);
  }

  private async bringUpToDate(region: string, settings: BraidSettings): Promise<BraidHistory<number>> {
    const frames = this.store.framesWithFootpoints(region);
    const key = JSON.stringify(settings);
    const held = this.histories.get(region);
    let history = held && held.settings === key && isPrefix(held.history.keys, frames) ? held.history : emptyBraidHistory<number>();
    const start = history.keys.length;
    for (let k = start; k < frames.length; k += SLICE) {
      if (k > start) await new Promise((r) => setImmediate(r));
      const slice = frames.slice(k, k + SLICE).flatMap((f) => {
        const footpoints = this.analysisOf(f.id);
        return footpoints ? [{ key: f.id, footpoints }] : [];
      });
      history = extendBraidHistory(history, slice, settings);
    }
    this.histories.set(region, { settings: key, history });
    return history;
  }
  private analysisOf(id: number): Pick<FootpointAnalysis, 'time' | 'footpoints' | 'events'> | undefined {
    const { footpoints, events } = this.store.footpoints(id);
    const report = footpoints as FootpointReport | null;
    if (!report?.footpoints) return undefined;
    return { time: report.time, footpoints: report.footpoints, events: (events ?? []) as FootpointAnalysis['events'] };
  }
}

function isPrefix(keys: readonly number[], frames: readonly { id: number }[]): boolean {
  if (keys.length > frames.length) return false;
  for (let i = 0; i < keys.length; i++) if (keys[i] !== frames[i].id) return false;
  return true;
}
