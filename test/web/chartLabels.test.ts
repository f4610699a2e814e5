// Where the charts put their words: markers cluster, labels never overlap, threshold labels stay off
// the curves (checked against the drawn polylines' pixel columns).
import { describe, expect, it } from 'vitest';
import { boxesOverlap, boxHitsCurves, clusterMoments, curveColumns, noOverlap, placeMarkerLabels, placeThresholdLabel } from '../../web/chartLabels.js';

describe('alert markers', () => {
  it('join moments closer than a marker and keep the others apart', () => {
    const c = clusterMoments([{ px: 100, label: 'a' }, { px: 110, label: 'b' }, { px: 300, label: 'c' }, { px: 105, label: 'a' }], 16);
    expect(c.map((x) => x.labels)).toEqual([['a', 'b'], ['c']]);
    expect(c[0].px).toBeCloseTo(105);
  });

  it('put labels in lanes so that none overlaps another or a marker, and leave out what has no room', () => {
    const markers = [100, 118, 136].map((px) => ({ x: px - 6, y: 0, w: 12, h: 10 }));
    const placed = placeMarkerLabels([100, 118, 136].map((px) => ({ px, width: 80 })), 13, 0, 0, 400, 2, markers);
    const boxes = placed.filter((b): b is NonNullable<typeof b> => b !== undefined);
    expect(boxes.length).toBe(3); // right of the last, left of the first, second lane for the middle
    expect(noOverlap([...markers, ...boxes])).toBe(true);
    // With one lane and no room left or right, a label is left out rather than overlapped.
    const tight = placeMarkerLabels([{ px: 50, width: 300 }, { px: 60, width: 300 }], 13, 0, 0, 400, 1, []);
    expect(tight[1]).toBeUndefined();
  });
});

describe('threshold labels', () => {
  // A line rising from (0, 100) to (400, 0) in canvas pixels (y down), over a plot 400 x 100.
  const plot = { left: 0, right: 400, top: 0, bottom: 100 };
  const cols = curveColumns([[{ x: 0, y: 100 }, { x: 400, y: 0 }]], 0, 400, 2);

  it('sees where a curve passes', () => {
    expect(boxHitsCurves(cols, { x: 190, y: 45, w: 20, h: 10 })).toBe(true); // the line is at y = 50 at x = 200
    expect(boxHitsCurves(cols, { x: 10, y: 10, w: 60, h: 14 })).toBe(false); // top left, far above the line
    // A break (null) leaves its span free.
    const broken = curveColumns([[{ x: 0, y: 50 }, { x: 100, y: 50 }, { x: 150, y: null }, { x: 200, y: 50 }, { x: 300, y: 50 }]], 0, 400, 2);
    expect(boxHitsCurves(broken, { x: 110, y: 45, w: 80, h: 10 })).toBe(false); // between 100 and 200 nothing is drawn
    expect(boxHitsCurves(broken, { x: 110, y: 45, w: 95, h: 10 })).toBe(true); // reaches the line again at 200
  });

  it('go beside their line where no curve passes, else nowhere (to the note)', () => {
    // Threshold at y = 30: the curve crosses it at x = 280; the right end above the line is on the curve
    // (x 300-400 has y 25 to 0), the left end is free.
    const box = placeThresholdLabel(30, 120, 14, plot, cols, [])!;
    expect(box).toBeDefined();
    expect(boxHitsCurves(cols, box)).toBe(false);
    expect(Math.abs(box.y + box.h / 2 - 30)).toBeLessThan(20);
    // A curve that fills the plot leaves no room.
    const zigzag = curveColumns(Array.from({ length: 200 }, (_, i) => [{ x: 2 * i, y: 0 }, { x: 2 * i + 1, y: 100 }]), 0, 400, 1);
    expect(placeThresholdLabel(50, 120, 14, plot, zigzag, [])).toBeUndefined();
  });

  it('avoid boxes already taken', () => {
    const taken = [{ x: 0, y: 0, w: 400, h: 100 }];
    expect(placeThresholdLabel(30, 120, 14, plot, curveColumns([], 0, 400), taken)).toBeUndefined();
    expect(boxesOverlap({ x: 0, y: 0, w: 10, h: 10 }, { x: 10, y: 0, w: 10, h: 10 })).toBe(false);
  });
});

describe('marker labels and curves', () => {
  it('keep off a curve that runs along the top, or stay out', () => {
    // A curve along y = 5 from x = 0 to 400: the first lane (y 0-13) is on it, the second (13-26) is free.
    const cols = curveColumns([[{ x: 0, y: 5 }, { x: 400, y: 5 }]], 0, 400, 2);
    const [box] = placeMarkerLabels([{ px: 200, width: 60 }], 13, 0, 0, 400, 3, [], cols);
    expect(box).toBeDefined();
    expect(box!.y).toBe(13);
    expect(boxHitsCurves(cols, box!)).toBe(false);
    const filled = curveColumns([[{ x: 0, y: 5 }, { x: 400, y: 5 }], [{ x: 0, y: 20 }, { x: 400, y: 20 }], [{ x: 0, y: 33 }, { x: 400, y: 33 }]], 0, 400, 2);
    expect(placeMarkerLabels([{ px: 200, width: 60 }], 13, 0, 0, 400, 3, [], filled)).toEqual([undefined]);
  });
});
