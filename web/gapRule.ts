// Where the page breaks a line: the server's gap rule (docs/server.md: an interval longer than the
// region's budget `gapFactor` times the median cadence is a gap), with the factor sent in the
// snapshot and the cadence in the status. The server lists the gaps its budget found; this rule
// also breaks the lines at steps the page sees before the server has a cadence to judge them by.

import { BUDGET_DEFAULTS } from '../core/budget.js';

/**
 * The longest step, ms, drawn as a joined line: gapFactor x cadence. The factor and the cadence
 * come from the monitor (snapshot `gap_factor`, status `cadence_s`); without them the core's
 * default factor and the page's own median step stand in. Infinity while no cadence is known.
 */
export function breakStepMs(gapFactor: number | null | undefined, cadenceS: number | null | undefined, pageStepMs: number | undefined): number {
  const factor = typeof gapFactor === 'number' && gapFactor > 0 ? gapFactor : BUDGET_DEFAULTS.gapFactor;
  const cadenceMs = typeof cadenceS === 'number' && cadenceS > 0 ? cadenceS * 1000 : pageStepMs;
  return cadenceMs !== undefined && cadenceMs > 0 ? factor * cadenceMs : Infinity;
}
