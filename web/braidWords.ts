// The braid in words (docs/braids.md): the line under the entropy chart, which entropies are lower
// bounds, and the window's triples braided unseen by the pair budget with their one line of
// explanation. No DOM: the tests read these words too.

import { formatSci } from './unitFormat.js';
import type { BraidAnswer, BraidTriple } from './wire.js';

/** The one line said beside the flagged triples. */
export const TRIPLE_EXPLANATION =
  'These three are braided although no pair of them winds on balance, so the pair helicity budget does not see it.';

/** Whether the window's and the run's entropies are exact (3 strands) or lower bounds. */
export function braidExactness(answer: BraidAnswer | undefined): { window: boolean; run: boolean } {
  return { window: answer?.last?.window?.exact ?? true, run: answer?.last?.run.exact ?? true };
}

const perHour = (v: number | null | undefined): string => `${formatSci(v, 2)} h⁻¹`;

/** The line under the chart: window and run in words, the strands, the newest segment, exact or lower bounds. */
export function braidNote(answer: BraidAnswer | undefined): string {
  const last = answer?.last;
  if (!answer || !last) return '';
  const parts: string[] = [];
  const w = last.window;
  if (w) parts.push(`window ${formatSci(w.hours, 2)} h: ${perHour(w.ratePerHour)}`);
  const r = last.run;
  parts.push(`whole run ${formatSci(r.hours, 2)} h, ${r.segments} segment${r.segments === 1 ? '' : 's'}: ${perHour(r.ratePerHour)}`);
  const n = last.strands.length;
  const exact = braidExactness(answer);
  parts.push(exact.window && exact.run ? `exact (${n} strands: ${last.strands.join(', ')})` : `lower bounds (${n} strands: ${last.strands.join(', ')}; the Burau matrix on the unit circle)`);
  const newest = answer.segments.at(-1);
  if (newest) parts.push(`segment since ${newest.time.slice(11, 16)} UTC: ${newest.reason}`);
  // Fetched at most every few seconds: in a fast replay the braid may trail the rate chart.
  parts.push(`to ${last.time.slice(11, 16)} UTC`);
  return parts.join(' · ');
}

/** The window's triples braided unseen by the pair budget, most entropy first (as the route sorts them). */
export function flaggedTriples(answer: BraidAnswer | undefined): BraidTriple[] {
  return (answer?.last?.window?.triples ?? []).filter((t) => t.flagged);
}
