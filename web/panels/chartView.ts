// What every time chart shares: the range shown (the store's view over the held series) and the
// break rule (the server's gap rule), so the rate, budget and flux charts always agree.

import type { SeriesView } from '../charts.js';
import { breakStepMs } from '../gapRule.js';
import type { PageState } from '../pageStore.js';
import { medianStepMs } from '../seriesMerge.js';
import { viewRange } from '../timeRange.js';

export function shownRange(s: Readonly<PageState>): [number, number] | undefined {
  return viewRange(s.view, s.series[0]?.t, s.series[s.series.length - 1]?.t);
}

export function seriesViewOf(s: Readonly<PageState>, widthPx: number): SeriesView {
  return {
    gaps: s.gaps,
    buckets: Math.max(50, Math.round(widthPx)),
    range: shownRange(s),
    breakStepMs: breakStepMs(s.gapFactor, s.status?.cadence_s, medianStepMs(s.series)),
  };
}
