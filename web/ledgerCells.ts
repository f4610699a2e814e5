// What the ledger and the rate panel say about values that cannot be read: a rotation within its
// error, a rotation or spin that cannot be measured (a round footpoint has no pattern to turn),
// and which velocity method produced the rates. A value under the noise shows as "—" with the
// reason on hover (title), never as a number like +9.2e-10°/h.

import { formatOmega, formatRate, NO_VALUE } from './unitFormat.js';
import type { WireFootpoint, WireSample } from './wire.js';

/** A ledger cell: the text shown and the reason on hover ('' when there is nothing to add). */
export interface Cell {
  text: string;
  title: string;
}

export type LedgerFootpoint = WireFootpoint;

export const ROUND_FOOTPOINT = 'rotation not observable (round footpoint)';

/** Why a rotation is missing, in words, from the analysis' note. */
export function rotationReason(note: string | null | undefined): string {
  switch (note) {
    case 'axisymmetric': return ROUND_FOOTPOINT;
    case 'too-small': return 'rotation not measurable (footpoint too small)';
    case 'too-noisy': return 'rotation not measurable (pattern too noisy)';
    case 'poor-fit': return 'rotation not measurable (the turned pattern does not fit)';
    case 'first-frame': return 'rotation not measurable yet (first frame: nothing to compare with)';
    case 'appeared': return 'rotation not measurable yet (footpoint just appeared)';
    case 'merged': return 'rotation not measurable (footpoint merged this frame)';
    case 'split': return 'rotation not measurable (footpoint split this frame)';
    case 'off': return 'pattern rotation is switched off in the settings';
    default: return 'rotation not measurable';
  }
}

/** The rotation cell: "—" when unmeasurable, not observable or within its 1σ error. */
export function rotationCell(fp: LedgerFootpoint): Cell {
  const omega = fp.omega;
  if (fp.omega_method === 'unobservable' || omega === null || !Number.isFinite(omega)) return { text: NO_VALUE, title: rotationReason(fp.omega_note) };
  // A round footpoint has no pattern to turn: a rate from the velocity field there is noise.
  if (fp.omega_note === 'axisymmetric') return { text: NO_VALUE, title: `${ROUND_FOOTPOINT}; the velocity field gives ${formatOmega(omega)}` };
  const err = fp.omega_error;
  if (typeof err === 'number' && Number.isFinite(err) && err > 0) {
    if (Math.abs(omega) <= err) return { text: NO_VALUE, title: `rotation ${formatOmega(omega)} is within its error ±${formatOmega(err).replace(/^\+/, '')} (1σ)` };
    return { text: `${formatOmega(omega)}${fp.omega_method === 'pattern' ? ' (pattern)' : ''}`, title: `±${formatOmega(err).replace(/^\+/, '')} (1σ)` };
  }
  return { text: `${formatOmega(omega)}${fp.omega_method === 'pattern' ? ' (pattern)' : ''}`, title: fp.omega_method === 'velocity' ? 'from the velocity field; no error estimate for this footpoint' : '' };
}

/** The spin cell: "—" with the reason when the spin is null (round footpoints and the like). */
export function spinCell(fp: LedgerFootpoint): Cell {
  if (fp.spin === null || !Number.isFinite(fp.spin)) {
    return { text: NO_VALUE, title: fp.omega_note ? rotationReason(fp.omega_note) : 'spin not measurable' };
  }
  return { text: formatRate(fp.spin), title: '' };
}

/** The sample flags in words (docs/api.md "Sample"); an unknown flag is shown as it is. */
const FLAG_WORDS: Record<string, string> = {
  'after-gap': 'first sample after a gap',
  'masked-pixels': 'some pixels had no data (masked)',
  'no-footpoints': 'no footpoints found: no spin/orbit split',
  'spin-unobservable': 'spin of round footpoints not observable',
  'flux-left-out': 'weak flux without a velocity taken as still',
  'sigma-without-velocity-error': '1σ without the velocity error',
  'first-frame': 'first frame: nothing to compare with',
  'no-velocity': 'no velocity',
  'noise-floor': 'noise level from the floor, not measured',
  'motion-unknown': 'some footpoint motions unknown',
  'spin-unknown': 'some spins unknown',
};

export function flagWords(flags: readonly string[]): string[] {
  return flags.map((f) => FLAG_WORDS[f] ?? f);
}

const METHOD_NAMES: Record<string, string> = { lct: 'LCT', dave: 'DAVE', dave4vm: 'DAVE4VM' };

/**
 * One line on where the rates come from and how far to trust them, from the newest sample:
 * "velocity inferred (DAVE); spin of round footpoints not observable". Empty without samples.
 */
export function provenanceLine(sample: Pick<WireSample, 'velocity_method' | 'flags'> | undefined): string {
  if (!sample || !sample.velocity_method) return '';
  const m = sample.velocity_method;
  const parts = [m === 'given' ? 'velocity given with the frames (measured, not inferred)' : `velocity inferred (${METHOD_NAMES[m] ?? m}) from the field's motions`];
  const flags = sample.flags ?? [];
  if (flags.includes('spin-unobservable')) parts.push('spin of round footpoints not observable (not in the spin rate)');
  if (flags.includes('flux-left-out')) parts.push('some weak flux had no velocity and was taken as still');
  return parts.join('; ');
}

/**
 * The frame's number as the page shows it everywhere: its place in the region's series, counted
 * from 1 ("frame 5 of 361"), the same count the replay bar uses (frames sent so far of the
 * archive's total). The store's frame id (global across regions, e.g. 365) is not a count; it is
 * given separately for the FITS export and on hover.
 */
export function frameNumberLabel(index: number, seriesLength: number, replayTotal: number | null | undefined): string {
  if (!(index >= 0)) return 'frame';
  const total = replayTotal ?? seriesLength;
  return `frame ${index + 1} of ${Math.max(total, index + 1)}`;
}
