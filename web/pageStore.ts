// The page's state in one small store: panels read it, change it through `set`, and redraw what
// concerns them when told which keys changed. No globals: startPage() makes the one store.

import type { FrameEntry } from './frameList.js';
import type { GapSpan, SeriesPoint } from './seriesMerge.js';
import { ALL, type TimeView } from './timeRange.js';
import type { BraidAnswer, FeedStatus, LatestFrame, RegionInfo, WireAlert, WireFootpoint } from './wire.js';

/** The viewer socket's state. */
export type LinkState = 'connecting' | 'live' | 'reconnecting' | 'closed';

/** The frame on the map, as the ledger and the captions need it. */
export interface ShownFrame {
  frameId: string | number;
  time: number;
  footpoints: WireFootpoint[];
  /** "frame 5 of 361 · time". */
  label: string;
}

export interface PageState {
  regions: RegionInfo[];
  /** The region list has been answered at least once (an empty monitor is then known to be empty). */
  regionsLoaded: boolean;
  regionNote: string;
  /** Reading needs the token on this monitor; the socket then carries it too. */
  readProtected: boolean;
  region?: string;
  /** Bumped on every region switch; answers for an older generation are dropped. */
  generation: number;
  series: SeriesPoint[];
  /** The region's stored frames (id, time), for numbering; empty until the frame list is answered. */
  frames: FrameEntry[];
  gaps: GapSpan[];
  alerts: WireAlert[];
  /** Wall-clock ms at which the page received each alert's latest change live (by alert id). */
  alertArrivals: ReadonlyMap<string, number>;
  status?: FeedStatus;
  /** The region's gap rule factor from the snapshot (undefined from older monitors). */
  gapFactor?: number;
  latestFrame?: LatestFrame;
  /** Follow the newest frame on the map, or stay on the picked one. */
  follow: boolean;
  pickedIndex: number;
  selectedFootpoint: string | null;
  linkState: LinkState;
  retryInMs?: number;
  linkOpens: number;
  framesSeen: number;
  ackMessage?: { id: string | number; text: string };
  /** The time range the charts show and the exports cover. */
  view: TimeView;
  /** Whether the map asks for the G_theta overlay. */
  overlay: boolean;
  shownFrame?: ShownFrame;
  /** The region's braid (GET .../braid, fetched on frames, throttled); null: this monitor has no braid route. */
  braid?: BraidAnswer | null;
}

export function initialPageState(): PageState {
  return {
    regions: [], regionsLoaded: false, regionNote: '', readProtected: false, generation: 0, series: [], frames: [], gaps: [], alerts: [],
    alertArrivals: new Map(), follow: true, pickedIndex: -1, selectedFootpoint: null, linkState: 'connecting', linkOpens: 0,
    framesSeen: 0, view: ALL, overlay: false,
  };
}

export type StateKey = keyof PageState;
export type Listener = (state: Readonly<PageState>, changed: ReadonlySet<StateKey>) => void;

export interface PageStore {
  get(): Readonly<PageState>;
  /** Merges the patch; listeners hear about the keys whose value changed (by identity). */
  set(patch: Partial<PageState>): void;
  subscribe(listener: Listener): () => void;
}

export function createPageStore(initial: PageState = initialPageState()): PageStore {
  let state: PageState = initial;
  const listeners = new Set<Listener>();
  return {
    get: () => state,
    set(patch) {
      const changed = new Set<StateKey>();
      for (const key of Object.keys(patch) as StateKey[]) if (!Object.is(state[key], patch[key])) changed.add(key);
      if (changed.size === 0) return;
      state = { ...state, ...patch };
      for (const l of [...listeners]) l(state, changed);
    },
    subscribe(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
  };
}

/** True when any of the keys changed. */
export function touched(changed: ReadonlySet<StateKey>, ...keys: StateKey[]): boolean {
  return keys.some((k) => changed.has(k));
}
