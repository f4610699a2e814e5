// Starts the dashboard on the page's elements: one store, the data link, one panel per file.
// Nothing here runs on import; main.ts (the bundle's entry) calls startPage() once.

import { createPageStore, type PageStore } from './pageStore.js';
import { installProbe } from './pageProbe.js';
import { startBraidFeed } from './braidFeed.js';
import { mountAlertPanel } from './panels/alertPanel.js';
import { mountBraidPanel } from './panels/braidPanel.js';
import { mountExportsPanel } from './panels/exportsPanel.js';
import { mountFeedPanel } from './panels/feedPanel.js';
import { mountFirstScreen } from './panels/firstScreen.js';
import { mountFluxPanel } from './panels/fluxPanel.js';
import { mountLedgerPanel } from './panels/ledgerPanel.js';
import { mountMapPanel } from './panels/mapPanel.js';
import { mountRangeBar } from './panels/rangeBar.js';
import { mountRegionPicker } from './panels/regionPicker.js';
import { mountReplayPanel } from './panels/replayPanel.js';
import { mountSpherePanel } from './panels/spherePanel.js';
import { mountTimeCharts } from './panels/timeCharts.js';
import { mountTokenDialog } from './panels/tokenDialog.js';
import { createRegionFeed, type RegionFeed } from './regionFeed.js';

/** How often the region list is asked again (new regions appear with their first frame). */
const REGION_POLL_MS = 30_000;

export interface RunningPage {
  store: PageStore;
  feed: RegionFeed;
  stop(): void;
}

export function startPage(): RunningPage {
  const store = createPageStore();
  const token = mountTokenDialog();
  const feed = createRegionFeed(store, (then) => token.ask(then));
  mountRegionPicker(store, (name) => feed.open(name));
  mountFirstScreen(store);
  mountFeedPanel(store);
  mountReplayPanel(store, token);
  mountRangeBar(store);
  const charts = mountTimeCharts(store);
  const braid = mountBraidPanel(store, () => charts.rate);
  const sphere = mountSpherePanel(store, () => charts.rate);
  const flux = mountFluxPanel(store);
  const map = mountMapPanel(store);
  mountLedgerPanel(store);
  mountAlertPanel(store, token);
  mountExportsPanel(store, { ...charts, flux: flux.chart });
  installProbe(store, { ...charts, flux: flux.chart, braid: braid.chart, sphere: sphere.chart }, map.view);
  const braidFeed = startBraidFeed(store);
  void feed.loadRegions();
  const poll = setInterval(() => void feed.loadRegions(), REGION_POLL_MS);
  return {
    store,
    feed,
    stop() {
      clearInterval(poll);
      braidFeed.stop();
      feed.stop();
    },
  };
}
