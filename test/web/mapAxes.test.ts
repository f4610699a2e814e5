// The map's axes and scale bar: round ticks (1, 2, 5 x 10^k Mm) over the map's extent and a bar
// of a round length no longer than asked.
import { describe, expect, it } from 'vitest';
import { axisTicks, edgeTicks, niceStep, scaleBar, tickStep, tickText } from '../../web/mapAxes.js';
import { pixelToWorld } from '../../core/frameAssembly/wcs.js';
import { CEA_WCS } from './support/fakeMonitor.js';

describe('map axes', () => {
  it('tick round values inside the extent', () => {
    // 96 pixels of 0.72 Mm: x from -0.36 to 68.76 Mm at the pixel edges.
    expect(axisTicks(-0.36, 68.76, 5)).toEqual([0, 20, 40, 60]);
    expect(axisTicks(-0.36, 68.76, 8)).toEqual([0, 10, 20, 30, 40, 50, 60]);
    expect(niceStep(92, 4)).toBe(50);
    expect(niceStep(0.9, 5)).toBe(0.2);
    expect(axisTicks(0, 1, 5).map((v) => tickText(v))).toEqual(['0', '0.2', '0.4', '0.6', '0.8', '1']);
    expect([-18, -0.5].map((v) => tickText(v))).toEqual(['−18', '−0.5']);
    // With the step: half-degree latitude ticks past 10 keep their decimal (rounded they would read alike).
    const lat = axisTicks(-19.1, -17.9, 4);
    expect(lat.map((v) => tickText(v, tickStep(lat)))).toEqual(['−19.0', '−18.5', '−18.0']);
    expect(tickText(121.25, 0.05)).toBe('121.25');
    expect(tickStep([359.5, 0, 0.5])).toBe(0.5);
  });

  it('draw a scale bar of a round length, at most the pixels given', () => {
    expect(scaleBar(4, 120)).toEqual({ mm: 20, px: 80 });
    expect(scaleBar(4, 200)).toEqual({ mm: 50, px: 200 });
    expect(scaleBar(0.5, 120)).toEqual({ mm: 200, px: 100 });
    expect(scaleBar(0, 120)).toEqual({ mm: 0, px: 0 });
  });
});

describe('degree ticks along an edge', () => {
  it('sit where the edge pixels cross round degrees', () => {
    // Values 10.2, 10.7, 11.2, 11.7 at pixels 0..3, ticks every 0.5: 11 is crossed 0.6 of the way from pixel 1 to 2.
    const t = edgeTicks([10.2, 10.7, 11.2, 11.7], 3);
    expect(t.map((x) => x.value)).toEqual([10.5, 11, 11.5]);
    expect(t.map((x) => x.pos)).toEqual([0.6, 1.6, 2.6].map((p) => expect.closeTo(p, 9)));
    // Longitudes across 0/360 are unwrapped and labelled back in 0..360.
    const ticks = edgeTicks([359.2, 359.7, 0.2, 0.7], 3, true);
    expect(ticks.map((x) => x.value)).toEqual([359.5, 0, 0.5]);
    expect(ticks[1].pos).toBeCloseTo(1.6, 9);
  });

  it('match the core WCS (astropy-checked) at the tick positions of a CEA Carrington frame', () => {
    const top = Array.from({ length: 96 }, (_, i) => pixelToWorld(CEA_WCS, i + 1, 96)![0]);
    for (const t of edgeTicks(top, 6, true)) {
      // The world longitude at the tick's fractional pixel, from the WCS itself.
      expect(pixelToWorld(CEA_WCS, t.pos + 1, 96)![0]).toBeCloseTo(t.value, 3);
    }
  });
});
