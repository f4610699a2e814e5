// The region's stored frames in time order (id and time), so the page numbers a frame by its place
// among them, "frame 5 of 361", as the replay bar counts frames sent. A sample is taken between two
// frames, so counting samples would number every frame one short.

import { isoToMs } from './seriesMerge.js';

export interface FrameEntry {
  readonly id: string;
  /** UTC ms. */
  readonly t: number;
}

/** The list with frames added (one per id; sorted by time); the input is not changed. */
export function mergeFrames(held: readonly FrameEntry[], incoming: readonly { frame_id: string | number; time: string }[]): FrameEntry[] {
  const byId = new Map(held.map((f) => [f.id, f]));
  for (const f of incoming) {
    const t = isoToMs(f.time);
    if (Number.isFinite(t)) byId.set(String(f.frame_id), { id: String(f.frame_id), t });
  }
  return [...byId.values()].sort((a, b) => a.t - b.t);
}

/** Index of a frame in the list, -1 when not there. */
export function frameIndex(frames: readonly FrameEntry[], frameId: string | number): number {
  const id = String(frameId);
  for (let i = frames.length - 1; i >= 0; i--) if (frames[i].id === id) return i;
  return -1;
}
