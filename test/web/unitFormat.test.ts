import { describe, expect, it } from 'vitest';
import {
  formatDuration, formatFlux, formatGauss, formatHelicity, formatOmega, formatRate, formatSci, formatUtc, NO_VALUE, prettyUnit,
} from '../../web/unitFormat.js';

describe('unit formatting', () => {
  it('writes helicity and rates in scientific notation with units', () => {
    expect(formatHelicity(3.2e42)).toBe('3.2e42 Mx²');
    expect(formatRate(6.1e36)).toBe('6.1e36 Mx²/s');
    expect(formatRate(-6.14e36)).toBe('\u22126.1e36 Mx²/s');
    expect(formatHelicity(9.96e41)).toBe('1.0e42 Mx²'); // rounding carries into the exponent
    expect(formatHelicity(0)).toBe('0 Mx²');
    expect(formatFlux(1.25e21, 3)).toBe('1.25e21 Mx');
    expect(formatSci(1.5e-3, 2)).toBe('1.5e-3');
    expect(formatSci(3, 2)).toBe('3'); // counts stay plain
    expect(formatSci(1234.5, 2)).toBe('1235');
    expect(formatSci(0.5, 2)).toBe('0.5');
    expect(formatSci(-2.25, 2)).toBe('\u22122.3');
    expect(formatSci(12000, 2)).toBe('1.2e4');
  });

  it('shows missing values as a dash without a unit', () => {
    expect(formatRate(null)).toBe(NO_VALUE);
    expect(formatHelicity(Number.NaN)).toBe(NO_VALUE);
    expect(formatGauss(undefined)).toBe(NO_VALUE);
    expect(formatOmega(null)).toBe(NO_VALUE);
  });

  it('writes fields in gauss and rotation in degrees per hour with its sense', () => {
    expect(formatGauss(1250.4)).toBe('1250 G');
    expect(formatGauss(-35)).toBe('\u221235 G');
    expect(formatGauss(0.5)).toBe('0.5 G');
    expect(formatGauss(0)).toBe('0 G');
    // 1 deg/h = pi/180/3600 rad/s.
    expect(formatOmega((3.1 * Math.PI) / 180 / 3600)).toBe('+3.1°/h');
    expect(formatOmega((-12.34 * Math.PI) / 180 / 3600)).toBe('\u221212.3°/h');
    expect(formatOmega(0)).toBe('0°/h');
    expect(formatOmega((7.9e-6 * Math.PI) / 180 / 3600)).toBe('+7.9e-6°/h'); // near-still spots stay short
  });

  it('writes UTC times and durations', () => {
    expect(formatUtc(Date.UTC(2026, 2, 14, 6, 5, 9))).toBe('2026-03-14 06:05:09 UTC');
    expect(formatUtc(Date.UTC(2026, 2, 14, 6, 5, 9), false)).toBe('2026-03-14 06:05 UTC');
    expect(formatDuration(45)).toBe('45 s');
    expect(formatDuration(720)).toBe('12 min');
    expect(formatDuration(5400)).toBe('1.5 h');
    expect(formatDuration(3 * 86400)).toBe('3.0 d');
  });

  it('prints wire units', () => {
    expect(prettyUnit('Mx^2/s')).toBe('Mx²/s');
    expect(prettyUnit('Mx^2 s^-1 cm^-2')).toBe('Mx² s⁻¹ cm⁻²');
  });
});

import { utcTickLabel, utcTickStep, utcTicks } from '../../web/timeTicks.js';

describe('UTC time ticks', () => {
  const t0 = Date.UTC(2026, 2, 14, 6, 7, 0);
  it('picks round steps and puts ticks on their UTC multiples', () => {
    expect(utcTickStep(t0, t0 + 6 * 3600_000, 8)).toBe(3600_000);
    expect(utcTickStep(t0, t0 + 6 * 3600_000, 14)).toBe(30 * 60_000);
    const ticks = utcTicks(t0, t0 + 6 * 3600_000, 8);
    expect(ticks.map((t) => new Date(t).toISOString().slice(11, 16))).toEqual(['07:00', '08:00', '09:00', '10:00', '11:00', '12:00']);
    expect(utcTicks(t0, t0 - 1, 8)).toEqual([]);
  });
  it('labels in UTC, with the date at midnight and for day steps', () => {
    expect(utcTickLabel(Date.UTC(2026, 2, 14, 7, 30), 1800_000)).toBe('07:30');
    expect(utcTickLabel(Date.UTC(2026, 2, 15, 0, 0), 3600_000)).toBe('03-15');
    expect(utcTickLabel(Date.UTC(2026, 2, 15, 0, 0), 86_400_000)).toBe('03-15');
  });
});
