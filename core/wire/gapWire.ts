// Gaps in a region's series as the API and the page see them: the samples on each side (ISO) and
// whether the budget was carried across. `within` keeps the gaps that touch a time range.
//
//   gapsForWire(state.budget.gaps); // [{ from: '2026-03-15T09:00:00.000Z', to: '...', bridged: false }]

import type { BudgetGap } from '../budget.js';

export interface WireGap {
  readonly from: string;
  readonly to: string;
  readonly bridged: boolean;
}

export function gapsForWire(gaps: readonly BudgetGap[], within?: { readonly from: number; readonly to: number }): WireGap[] {
  const kept = within ? gaps.filter((g) => g.to >= within.from && g.from <= within.to) : gaps;
  return kept.map((g) => ({ from: new Date(g.from).toISOString(), to: new Date(g.to).toISOString(), bridged: g.bridged }));
}
