// The ledger's rotation and spin cells and the rate panel's provenance line: values within their
// error or not measurable show "—" with the reason on hover, never a noise number.

import { describe, expect, it } from 'vitest';
import { normaliseFootpoint } from '../../web/footpointShape.js';
import { frameNumberLabel, provenanceLine, rotationCell, ROUND_FOOTPOINT, spinCell } from '../../web/ledgerCells.js';
import type { WireFootpoint } from '../../web/wire.js';

/** 1 degree per hour in rad/s. */
const DEG_H = Math.PI / 180 / 3600;

const fp = (over: Partial<WireFootpoint>): WireFootpoint => ({
  id: 1, polarity: 1, flux: 1e21, x: 0, y: 0, area: 10, omega: 2 * DEG_H, omega_method: 'pattern', spin: 3e36, spin_point: 3e36, partners: [], ...over,
});

describe('ledger cells', () => {
  it('shows a rotation larger than its error, with the error on hover', () => {
    const c = rotationCell(fp({ omega: 2 * DEG_H, omega_error: 0.5 * DEG_H }));
    expect(c.text).toBe('+2.0°/h (pattern)');
    expect(c.title).toBe('±0.50°/h (1σ)');
  });

  it('shows "—" for a rotation within its error, the value and error on hover', () => {
    const c = rotationCell(fp({ omega: -6.0e-7 * DEG_H, omega_error: 0.3 * DEG_H }));
    expect(c.text).toBe('—');
    expect(c.title).toBe('rotation −6.0e-7°/h is within its error ±0.30°/h (1σ)');
    // Exactly at the error is not a measurement either.
    expect(rotationCell(fp({ omega: 0.3 * DEG_H, omega_error: 0.3 * DEG_H })).text).toBe('—');
  });

  it('shows "—" for a round footpoint even when the velocity field gives a number', () => {
    const c = rotationCell(fp({ omega: 9.2e-10 * DEG_H, omega_method: 'velocity', omega_note: 'axisymmetric' }));
    expect(c.text).toBe('—');
    expect(c.title).toBe(`${ROUND_FOOTPOINT}; the velocity field gives +9.2e-10°/h`);
    expect(c.title).toContain('rotation not observable (round footpoint)');
  });

  it('shows "—" with the reason for an unmeasurable rotation', () => {
    expect(rotationCell(fp({ omega: null, omega_method: 'unobservable', omega_note: 'too-noisy' }))).toEqual({ text: '—', title: 'rotation not measurable (pattern too noisy)' });
    expect(rotationCell(fp({ omega: null, omega_method: 'unobservable', omega_note: 'first-frame' })).title).toMatch(/first frame/);
    expect(rotationCell(fp({ omega: null, omega_method: 'unobservable' }))).toEqual({ text: '—', title: 'rotation not measurable' });
  });

  it('says when a velocity rotation has no error estimate', () => {
    const c = rotationCell(fp({ omega: -3.1 * DEG_H, omega_method: 'velocity' }));
    expect(c.text).toBe('\u22123.1°/h');
    expect(c.title).toMatch(/no error estimate/);
  });

  it('shows a null spin as "—" with the reason, a measured spin with its unit', () => {
    expect(spinCell(fp({ spin: null, omega_note: 'axisymmetric' }))).toEqual({ text: '—', title: 'rotation not observable (round footpoint)' });
    expect(spinCell(fp({ spin: null }))).toEqual({ text: '—', title: 'spin not measurable' });
    expect(spinCell(fp({ spin: -4.04e36 }))).toEqual({ text: '\u22124.0e36 Mx²/s', title: '' });
  });
});

describe('provenance line of the rate', () => {
  it('names the velocity method and the caveats the flags carry', () => {
    expect(provenanceLine({ velocity_method: 'dave', flags: ['spin-unobservable'] })).toBe(
      "velocity inferred (DAVE) from the field's motions; spin of round footpoints not observable (not in the spin rate)",
    );
    expect(provenanceLine({ velocity_method: 'dave4vm', flags: [] })).toBe("velocity inferred (DAVE4VM) from the field's motions");
    expect(provenanceLine({ velocity_method: 'given', flags: ['flux-left-out'] })).toBe(
      'velocity given with the frames (measured, not inferred); some weak flux had no velocity and was taken as still',
    );
    expect(provenanceLine(undefined)).toBe('');
  });
});

describe('frame numbering', () => {
  it('counts frames in the series from 1, against the replay total when replaying', () => {
    // The 5th frame of a 361-frame replay, whatever its stored id: the replay bar's "frame 5 of 361".
    expect(frameNumberLabel(4, 5, 361)).toBe('frame 5 of 361');
    expect(frameNumberLabel(29, 30, null)).toBe('frame 30 of 30');
    expect(frameNumberLabel(-1, 30, null)).toBe('frame');
  });

  it('keeps the rotation error and the note the monitor sends with a footpoint row', () => {
    const f = normaliseFootpoint({ id: 4, x: 1, y: 2, flux: 1e20, omega: null, omegaSource: null, omega_note: 'axisymmetric', omega_error: 2e-6, spinExact: null });
    expect(f?.omega_note).toBe('axisymmetric');
    expect(f?.omega_error).toBe(2e-6);
    expect(spinCell(f!).title).toBe(ROUND_FOOTPOINT);
  });
});
