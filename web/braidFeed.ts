// The braid of the region shown, fetched from the monitor (GET /api/regions/:region/braid): when a
// region opens and again when frames arrive, but at most once per BRAID_REFRESH_MS however fast
// they come (a replay at full speed sends many frames a second; the route folds every stored frame),
// with one trailing fetch so the newest frame is always covered. Into the store as `braid`.

import { ApiError, getJson } from './api.js';
import { touched, type PageStore } from './pageStore.js';
import { routes } from './routes.js';
import { throttleDelay } from './throttle.js';
import type { BraidAnswer } from './wire.js';

export const BRAID_REFRESH_MS = 3000;

export function startBraidFeed(store: PageStore, minGapMs = BRAID_REFRESH_MS): { stop(): void } {
  let lastStart: number | undefined;
  let timer: ReturnType<typeof setTimeout> | undefined;
  let inFlight = false;
  let again = false;

  const fetchNow = (): void => {
    timer = undefined;
    const { region, generation } = store.get();
    if (!region) return;
    inFlight = true;
    again = false;
    lastStart = Date.now();
    getJson<BraidAnswer>(routes.braid(region))
      .then((answer) => {
        if (store.get().generation === generation) store.set({ braid: answer });
      })
      .catch((err) => {
        // A monitor without the route (older): the panel says so; other failures keep what was shown.
        if (err instanceof ApiError && err.status === 404 && store.get().generation === generation && store.get().braid === undefined) store.set({ braid: null });
      })
      .finally(() => {
        inFlight = false;
        if (again) request();
      });
  };
  const request = (): void => {
    if (inFlight) {
      again = true;
      return;
    }
    if (timer !== undefined) return;
    timer = setTimeout(fetchNow, throttleDelay(lastStart, Date.now(), minGapMs));
  };

  const unsubscribe = store.subscribe((_s, changed) => {
    if (touched(changed, 'generation')) {
      clearTimeout(timer);
      timer = undefined;
      lastStart = undefined;
    }
    if (touched(changed, 'generation', 'framesSeen', 'latestFrame')) request();
  });
  return {
    stop() {
      unsubscribe();
      clearTimeout(timer);
    },
  };
}
