import { describe, expect, it } from 'vitest';
import { fitMap, fromCanvas, glyphArc, GLYPH_FULL_DEG_PER_H, hitFootpoint, toCanvas } from '../../web/mapGeometry.js';

describe('map geometry', () => {
  it('fits the map keeping its aspect in Mm and centres it', () => {
    const f = fitMap(200, 100, 0.5, 0.5, 400, 400); // 100 Mm x 50 Mm into 400x400
    expect([f.sx, f.sy, f.offX, f.offY]).toEqual([2, 2, 0, 100]);
    const g = fitMap(100, 100, 1, 2, 300, 300); // non-square pixels: 100 Mm x 200 Mm
    expect([g.sx, g.sy]).toEqual([1.5, 3]);
  });

  it('puts data row 0 at the bottom (+y up) and inverts exactly', () => {
    const f = fitMap(10, 10, 1, 1, 100, 100);
    expect(toCanvas(f, 0, 0)).toEqual([5, 95]); // centre of pixel (0, 0): bottom-left
    expect(toCanvas(f, 9, 9)).toEqual([95, 5]); // top-right
    const [x, y] = fromCanvas(f, ...toCanvas(f, 3.3, 7.1));
    expect(x).toBeCloseTo(3.3, 12);
    expect(y).toBeCloseTo(7.1, 12);
  });

  it('finds the footpoint under a click', () => {
    const fps = [{ id: 1, x: 0, y: 0, area: Math.PI * 4 }, { id: 2, x: 5, y: 0, area: Math.PI * 4 }, { id: 3, x: 20, y: 0, area: 0 }];
    expect(hitFootpoint(fps, 1.5, 0, 0.5)?.id).toBe(1);
    expect(hitFootpoint(fps, 3.1, 0, 0.5)?.id).toBe(2);
    expect(hitFootpoint(fps, 10, 10, 0.5)).toBeUndefined();
    expect(hitFootpoint(fps, 20.4, 0, 0.5)?.id).toBe(3); // tiny ones still hit within the minimum radius
  });

  it('draws counter-clockwise rotation as a counter-clockwise arc and grows with the rate', () => {
    const ccw = glyphArc(5)!;
    const cw = glyphArc(-5)!;
    expect(ccw.anticlockwise).toBe(true);
    expect(cw.anticlockwise).toBe(false);
    expect(ccw.end).toBeLessThan(ccw.start); // canvas angles decrease counter-clockwise (y down)
    const sweep = (d: number): number => Math.abs(glyphArc(d)!.end - glyphArc(d)!.start);
    expect(sweep(1)).toBeLessThan(sweep(10));
    expect(sweep(GLYPH_FULL_DEG_PER_H)).toBeCloseTo((320 * Math.PI) / 180, 12);
    expect(sweep(10 * GLYPH_FULL_DEG_PER_H)).toBeCloseTo((320 * Math.PI) / 180, 12);
    expect(glyphArc(null)).toBeUndefined();
  });
});

import { splitTrack } from '../../web/mapGeometry.js';

describe('tracks', () => {
  it('cut where the id jumps to another concentration', () => {
    const pts: [number, number][] = [[0, 0], [0.5, 0], [1, 0.2], [30, 30], [30.4, 30], [1.2, 0.3]];
    expect(splitTrack(pts, 5)).toEqual([[[0, 0], [0.5, 0], [1, 0.2]], [[30, 30], [30.4, 30]], [[1.2, 0.3]]]);
    expect(splitTrack([], 5)).toEqual([]);
    expect(splitTrack(pts.slice(0, 3), 5)).toEqual([pts.slice(0, 3)]);
  });
});
