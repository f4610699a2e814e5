import { describe, expect, it } from 'vitest';
import { largestPartner, sortFootpoints, topPartners } from '../../web/ledgerSort.js';
import { budgetThresholds, mergeAlerts, raisedMoments, rateThresholds } from '../../web/alertMarks.js';
import { reconnectDelayMs } from '../../web/reconnect.js';
import { parseViewerMessage, type WireAlert, type WireFootpoint } from '../../web/wire.js';

function fp(id: number, flux: number, omega: number | null, spin: number | null, partners: [number, number][]): WireFootpoint {
  return {
    id, polarity: flux >= 0 ? 1 : -1, flux, x: 0, y: 0, area: 1, omega, omega_method: omega === null ? 'unobservable' : 'velocity',
    spin, spin_point: spin, partners: partners.map(([pid, orbit]) => ({ id: pid, orbit })),
  };
}

describe('footpoint ledger', () => {
  const rows = [fp(3, 2e21, 1e-5, -3e35, [[1, 1e34]]), fp(1, -5e21, null, null, [[3, -4e35], [2, 1e33]]), fp(2, 1e21, -2e-5, 5e35, [])];

  it('sorts by each key, missing values last in both directions', () => {
    expect(sortFootpoints(rows, 'id', 'ascending').map((r) => r.id)).toEqual([1, 2, 3]);
    expect(sortFootpoints(rows, 'flux', 'descending').map((r) => r.id)).toEqual([1, 3, 2]); // by |flux|
    expect(sortFootpoints(rows, 'omega', 'ascending').map((r) => r.id)).toEqual([2, 3, 1]);
    expect(sortFootpoints(rows, 'omega', 'descending').map((r) => r.id)).toEqual([3, 2, 1]);
    expect(sortFootpoints(rows, 'spin', 'descending').map((r) => r.id)).toEqual([2, 3, 1]);
    expect(sortFootpoints(rows, 'partner', 'descending').map((r) => r.id)).toEqual([1, 3, 2]);
    expect(rows.map((r) => r.id)).toEqual([3, 1, 2]); // input untouched
  });

  it('orders partners by |orbit|', () => {
    expect(largestPartner(rows[1])).toEqual({ id: 3, orbit: -4e35 });
    expect(topPartners(fp(9, 1, 0, 0, [[1, 1], [2, -5], [3, 3], [4, 2]]), 2)).toEqual([{ id: 2, orbit: -5 }, { id: 3, orbit: 3 }]);
  });

  it('sorts ids numerically', () => {
    const r = [{ ...rows[0], id: 10 }, { ...rows[1], id: 2 }];
    expect(sortFootpoints(r, 'id', 'ascending').map((x) => x.id)).toEqual([2, 10]);
  });
});

function alert(id: string, unit: string, threshold: number | null, history: [string, string][], state: WireAlert['state'] = 'raised'): WireAlert {
  return {
    id, rule: `rule-${id}`, state, since: '2026-03-14T07:00:00Z', threshold, unit, source: `src ${id}`,
    evidence: { value: 1 }, acknowledged: false,
    history: history.map(([time, to]) => ({ time, from: 'rising', to: to as WireAlert['state'] })),
  };
}

describe('alert marks', () => {
  it('takes budget thresholds from the alerts, published defaults otherwise', () => {
    expect(budgetThresholds([]).map((t) => t.value)).toEqual([2e42, 9e41]);
    const a = [alert('a', 'Mx^2', 1.5e42, []), alert('b', 'Mx^2/s', 6e36, []), alert('c', 'Mx²', -1.5e42, [])];
    expect(budgetThresholds(a).map((t) => [t.value, t.source])).toEqual([[1.5e42, 'src a']]);
    expect(rateThresholds(a).map((t) => t.value)).toEqual([6e36]);
  });

  it('finds the raised moments from history, and since when history is silent', () => {
    const a = [
      alert('a', 'Mx^2', 2e42, [['2026-03-14T06:30:00Z', 'rising'], ['2026-03-14T06:42:00Z', 'raised'], ['2026-03-14T08:00:00Z', 'settled']], 'settled'),
      alert('b', 'Mx^2', 9e41, []),
      alert('c', 'Mx^2', 9e41, [], 'quiet'),
    ];
    expect(raisedMoments(a).map((m) => [m.alertId, new Date(m.t).toISOString()])).toEqual([
      ['a', '2026-03-14T06:42:00.000Z'],
      ['b', '2026-03-14T07:00:00.000Z'],
    ]);
  });

  it('merges alert updates by id', () => {
    const m = mergeAlerts([alert('a', 'Mx^2', 1, [], 'rising')], [alert('a', 'Mx^2', 1, [], 'raised'), alert('b', 'Mx^2', 1, [])]);
    expect(m.map((x) => [x.id, x.state])).toContainEqual(['a', 'raised']);
    expect(m).toHaveLength(2);
  });
});

describe('reconnect and messages', () => {
  it('backs off doubling from 0.5 s to a 10 s cap', () => {
    expect([0, 1, 2, 3, 4, 5, 6, 50].map((a) => reconnectDelayMs(a))).toEqual([500, 1000, 2000, 4000, 8000, 10000, 10000, 10000]);
    expect(reconnectDelayMs(0, 0.5)).toBe(563);
  });

  it('parses known viewer messages and ignores others', () => {
    expect(parseViewerMessage('{"type":"sample","sample":{}}')?.type).toBe('sample');
    expect(parseViewerMessage('{"type":"mystery"}')).toBeUndefined();
    expect(parseViewerMessage('not json')).toBeUndefined();
    expect(parseViewerMessage('null')).toBeUndefined();
  });
});

import { shortSource } from '../../web/alertMarks.js';

describe('threshold labels', () => {
  it('keep the citation of a long source text', () => {
    expect(shortSource('Tziotziou, Georgoulis & Raouafi 2012 (ApJL 759, L4): eruptive active regions sit above 2e42 Mx^2')).toBe('Tziotziou, Georgoulis & Raouafi 2012');
    expect(shortSource('Liokati et al. 2022: emerging regions')).toBe('Liokati et al. 2022');
    expect(shortSource('Liokati et al. 2022')).toBe('Liokati et al. 2022');
  });
});
