// The Flux panel: unsigned flux and H/Phi^2 over the range the other charts show.

import { redrawOnChange } from './redrawOnChange.js';
import { byId } from '../dom.js';
import { createFluxChart, setFluxData } from '../fluxChart.js';
import type { PageStore } from '../pageStore.js';
import { formatFlux } from '../unitFormat.js';
import { seriesViewOf } from './chartView.js';

export function mountFluxPanel(store: PageStore): { chart: ReturnType<typeof createFluxChart>; carried: () => number } {
  const chart = createFluxChart(byId<HTMLCanvasElement>('flux-chart'));
  const note = byId('flux-note');
  const empty = byId('flux-empty');
  let carried = 0;
  const draw = (): void => {
    const s = store.get();
    carried = setFluxData(chart, s.series, seriesViewOf(s, chart.chartArea?.width ?? chart.width));
    const last = s.series[s.series.length - 1]?.s;
    empty.hidden = carried > 0;
    empty.textContent = s.series.length === 0 ? 'no samples yet' : 'these samples carry no unsigned flux (rows written before the monitor measured it)';
    note.textContent = last?.flux_unsigned != null
      ? `newest: Φ ${formatFlux(last.flux_unsigned)} (|Bn| dA over pixels at or above 3 noise units), H/Φ² ${last.budget_normalised != null ? last.budget_normalised.toPrecision(2) : '—'} (budget over the current flux squared)`
      : '';
  };
  redrawOnChange(store, ['series', 'gaps', 'view', 'gapFactor', 'status'], draw);
  return { chart, carried: () => carried };
}
