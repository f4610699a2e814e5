// The data link of the page: the region list (polled, so new regions appear), and for the region
// shown one HTTP fetch of its whole series plus the viewer socket (snapshot, live messages,
// backfill after every reconnect). Everything it learns goes into the store.

import { ApiError, getJson } from './api.js';
import { mergeFrames } from './frameList.js';
import { mergeGaps } from './seriesMerge.js';
import type { PageStore } from './pageStore.js';
import { isRegionName, routes } from './routes.js';
import { tokenStore } from './tokenStore.js';
import { addSamples, applyViewerMessage } from './viewerMessages.js';
import { backfillSince } from './seriesMerge.js';
import { ViewerLink } from './viewerSocket.js';
import type { RegionInfo, WireGap, WireSample } from './wire.js';

export interface RegionFeed {
  loadRegions(): Promise<void>;
  open(name: string): void;
  stop(): void;
}

export function regionFromHash(hash: string): string | undefined {
  const m = /region=([^&]+)/.exec(hash);
  const name = m ? decodeURIComponent(m[1]) : undefined;
  return name && isRegionName(name) ? name : undefined;
}

/** Region choice: the one shown, else the one in the URL, else the demo, else the first. */
export function pickRegion(regions: readonly RegionInfo[], current: string | undefined, fromHash: string | undefined): string | undefined {
  const wanted = current ?? fromHash;
  return regions.find((r) => r.name === wanted)?.name ?? regions.find((r) => r.name === 'demo')?.name ?? regions[0]?.name;
}

export function createRegionFeed(store: PageStore, askToken: (then: () => void) => void): RegionFeed {
  let link: ViewerLink | undefined;
  let retry: ReturnType<typeof setTimeout> | undefined;
  const later = (ms: number): void => {
    clearTimeout(retry);
    retry = setTimeout(() => void feed.loadRegions(), ms);
  };

  const feed: RegionFeed = {
    async loadRegions() {
      let regions: RegionInfo[];
      try {
        regions = (await getJson<{ regions: RegionInfo[] }>(routes.regions())).regions ?? [];
      } catch (err) {
        if (err instanceof ApiError && err.status === 401) {
          // Reading is protected on this monitor: the token is needed to see anything.
          store.set({ readProtected: true, regionNote: 'this monitor needs the token for reading' });
          tokenStore.clear();
          askToken(() => void feed.loadRegions());
          return;
        }
        store.set({ regionNote: `regions unavailable: ${(err as Error).message}` });
        if (!store.get().region) later(3000);
        return;
      }
      store.set({ regions, regionsLoaded: true, regionNote: regions.length === 0 ? 'waiting for the first frame' : '' });
      if (regions.length === 0) {
        later(3000);
        return;
      }
      const pick = pickRegion(regions, store.get().region, regionFromHash(location.hash));
      if (pick && pick !== store.get().region) feed.open(pick);
    },

    open(name) {
      link?.close();
      const generation = store.get().generation + 1;
      store.set({
        region: name, generation, series: [], frames: [], gaps: [], alerts: [], alertArrivals: new Map(), status: undefined, gapFactor: undefined,
        latestFrame: undefined, follow: true, pickedIndex: -1, selectedFootpoint: null, framesSeen: 0, ackMessage: undefined,
        linkState: 'connecting', linkOpens: 0, shownFrame: undefined, braid: undefined,
      });
      history.replaceState(null, '', `#region=${encodeURIComponent(name)}`);
      const current = (): boolean => store.get().generation === generation;
      // The full history over HTTP; the socket's snapshot and live samples merge into it.
      getJson<{ samples: WireSample[]; gaps: WireGap[] }>(routes.series(name))
        .then((answer) => {
          if (!current()) return;
          const s = store.get();
          store.set({ ...addSamples(s, answer.samples ?? []), gaps: mergeGaps(s.gaps, answer.gaps ?? []) });
        })
        .catch(() => {
          /* the snapshot still brings the recent samples */
        });
      // The stored frames, for numbering them; asked again after every later snapshot (a rewind or a
      // removed frame changes the list).
      const loadFrames = (): void => {
        getJson<{ frames: { frame_id: string | number; time: string }[] }>(routes.frames(name))
          .then((answer) => {
            const latest = store.get().latestFrame;
            if (current()) store.set({ frames: mergeFrames([], [...(answer.frames ?? []), ...(latest ? [latest] : [])]) });
          })
          .catch(() => {
            /* numbering falls back to the samples */
          });
      };
      loadFrames();
      let snapshots = 0;
      // The link calls back from its constructor (connecting), before the name below is bound.
      let opened: ViewerLink | undefined = undefined;
      opened = new ViewerLink({
        region: name,
        // Only a monitor that protects reading gets the token in the socket URL.
        token: store.get().readProtected ? tokenStore.get() : undefined,
        onMessage: (m) => {
          if (!current()) return;
          store.set(applyViewerMessage(store.get(), m, Date.now()));
          if (m.type === 'snapshot' && snapshots++ > 0) loadFrames();
          // The monitor answers backfills in pages: ask for the next one from the last sample of this one.
          if (m.type === 'backfill' && m.more) {
            const last = m.samples?.[m.samples.length - 1];
            if (last) opened?.send({ type: 'backfill', since: last.time });
          }
        },
        onState: (state, detail) => {
          if (!current()) return;
          store.set({ linkState: state, retryInMs: detail.retryInMs, linkOpens: opened?.opens ?? 0 });
        },
        backfillSince: () => backfillSince(store.get().series),
      });
      link = opened;
    },

    stop() {
      clearTimeout(retry);
      link?.close();
      link = undefined;
    },
  };
  return feed;
}
