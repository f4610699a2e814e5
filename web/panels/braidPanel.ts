// The Braid panel beside the rate chart: the window's entropy rate over the same range as the
// other charts, the run's rate as a reference line, segment starts, and a line of words under it.

import { redrawOnChange } from './redrawOnChange.js';
import { createBraidChart, setBraidData } from '../braidChart.js';
import { braidNote } from '../braidWords.js';
import type { Chart } from 'chart.js';
import { byId } from '../dom.js';
import type { PageStore } from '../pageStore.js';
import { seriesViewOf } from './chartView.js';

/** `alignWith`: the rate chart, whose plot's edges this one takes (a time is one column on both). */
export function mountBraidPanel(store: PageStore, alignWith?: () => Chart | undefined): { chart: ReturnType<typeof createBraidChart> } {
  const chart = createBraidChart(byId<HTMLCanvasElement>('braid-chart'), alignWith);
  const note = byId('braid-note');
  const empty = byId('braid-empty');
  const draw = (): void => {
    const s = store.get();
    const answer = s.braid;
    setBraidData(chart, answer ?? { region: s.region ?? '', series: [], last: null, segments: [] }, seriesViewOf(s, chart.chartArea?.width ?? chart.width));
    const points = answer?.series.filter((r) => r.braid_entropy_rate != null).length ?? 0;
    empty.hidden = points > 0;
    empty.textContent = answer === null
      ? 'this monitor does not report the braid'
      : answer === undefined ? 'braid not fetched yet' : 'no braid yet: the window needs two frames with footpoints';
    const text = braidNote(answer ?? undefined);
    if (note.textContent !== text) note.textContent = text;
  };
    // 'alerts': the rate chart's thresholds change its value axis, which this plot lines up with.
  redrawOnChange(store, ['braid', 'series', 'alerts', 'gaps', 'view', 'gapFactor', 'status'], draw);
  return { chart };
}
