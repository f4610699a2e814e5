// The datasets of a time chart by name, so no code reads chart.data.datasets by a bare index.

import type { Chart } from 'chart.js';
import type { XY } from './decimate.js';

/** The datasets of a time chart, by name (their order in chart.data.datasets). */
export const DATASET = { bandUpper: 0, bandLower: 1, total: 2, spin: 3, orbit: 4, background: 5 } as const;
export type DatasetName = keyof typeof DATASET;

/** The points of one named dataset. */
export function datasetPoints(chart: Chart<'line', XY[]>, name: DatasetName): XY[] {
  return chart.data.datasets[DATASET[name]]?.data ?? [];
}
