import { describe, expect, it } from 'vitest';
import { analyseFootpoints } from '../../core/footpoints/analyseFootpoints.js';
import { footpointReport } from '../../core/footpoints/footpointReport.js';
import { sceneFrame } from './scene.js';

// JSON policy (DEVELOPERS.md, Conventions): NaN is written as null; the report must survive JSON unchanged.
describe('footpoint report', () => {
  const grid = { nx: 64, ny: 48, dx: 0.5, dy: 0.5 };
  const spots = [
    { x: 8, y: 10, a: 1.5, b: 1, angle: 0.3, peak: 900 }, { x: 20, y: 10, a: 1.2, b: 1.2, angle: 0, peak: -800 },
    { x: 14, y: 18, a: 1.2, b: 1.2, angle: 0, peak: 700 },
  ];
  const r0 = analyseFootpoints(undefined, sceneFrame(grid, 0, spots, 4, 1));
  // A fourth footpoint appears in the second frame: its motion, and so its pairs, are unknown.
  const r1 = analyseFootpoints(r0.state, sceneFrame(grid, 60_000, [...spots.map((s) => ({ ...s, x: s.x + 0.2 })), { x: 26, y: 18, a: 1, b: 1, angle: 0, peak: 600 }], 4, 2));

  it('without the table: totals, flags, events and top pairs only', () => {
    const rep = footpointReport(r1);
    expect(rep.count).toBe(4);
    expect(rep.footpoints).toBeUndefined();
    expect(rep.pairMatrix).toBeUndefined();
    expect(rep.events).toEqual([expect.objectContaining({ kind: 'appeared', cause: 'unpaired' })]);
    expect(JSON.parse(JSON.stringify(rep))).toEqual(rep);
  });

  it('with the table: rows and K x K matrices, null where unknown, equal after a JSON round trip', () => {
    const rep = footpointReport(r1, true);
    expect(rep.footpoints).toHaveLength(4);
    const m = rep.pairMatrix!;
    expect(m.ids).toEqual(r1.footpoints.map((f) => f.id));
    expect(m.orbitPoint).toHaveLength(4);
    expect(m.orbitExact).toBeNull();
    const fresh = m.ids.indexOf(r1.events[0].id);
    for (let j = 0; j < 4; j++) if (j !== fresh) expect(m.orbitPoint[fresh][j]).toBeNull();
    expect(m.orbitPoint[0][1]).toBe(r1.pairMatrix.orbitPoint[1]);
    expect(m.windingTurns[0][0]).toBeNull();
    expect(JSON.parse(JSON.stringify(rep))).toEqual(rep);
  });
});
