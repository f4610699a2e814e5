// The Rotation & hemispheres panel, shown only for regions whose rows carry the sphere's columns.

import { redrawOnChange } from './redrawOnChange.js';
import type { Chart } from 'chart.js';
import { byId } from '../dom.js';
import type { PageStore } from '../pageStore.js';
import { createSphereChart, setSphereData } from '../sphereChart.js';
import { carriesSphere, SPHERE_CAVEAT, sphereWords } from '../sphereWords.js';
import { seriesViewOf } from './chartView.js';

/** `alignWith`: the rate chart, whose plot's edges this one takes (a time is one column on both). */
export function mountSpherePanel(store: PageStore, alignWith?: () => Chart | undefined): { chart: ReturnType<typeof createSphereChart> } {
  const panel = byId('sphere-panel');
  const chart = createSphereChart(byId<HTMLCanvasElement>('sphere-chart'), alignWith);
  const words = byId('sphere-words');
  byId('sphere-caveat').textContent = SPHERE_CAVEAT;
  const draw = (): void => {
    const s = store.get();
    const shown = carriesSphere(s.series);
    if (panel.hidden === shown) {
      panel.hidden = !shown;
      if (shown) chart.resize();
    }
    if (!shown) return;
    setSphereData(chart, s.series, seriesViewOf(s, chart.chartArea?.width ?? chart.width));
    const text = sphereWords(s.series.at(-1)?.s);
    if (words.textContent !== text) words.textContent = text;
  };
    // 'alerts': the rate chart's thresholds change its value axis, which this plot lines up with.
  redrawOnChange(store, ['series', 'alerts', 'gaps', 'view', 'gapFactor', 'status', 'region'], draw);
  return { chart };
}
