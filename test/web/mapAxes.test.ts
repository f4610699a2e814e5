// The map's axes and scale bar: round ticks (1, 2, 5 x 10^k Mm) over the map's extent and a bar
// of a round length no longer than asked.
import { describe, expect, it } from 'vitest';
import { axisTicks, niceStep, scaleBar, tickText } from '../../web/mapAxes.js';

describe('map axes', () => {
  it('tick round values inside the extent', () => {
    // 96 pixels of 0.72 Mm: x from -0.36 to 68.76 Mm at the pixel edges.
    expect(axisTicks(-0.36, 68.76, 5)).toEqual([0, 20, 40, 60]);
    expect(axisTicks(-0.36, 68.76, 8)).toEqual([0, 10, 20, 30, 40, 50, 60]);
    expect(niceStep(92, 4)).toBe(50);
    expect(niceStep(0.9, 5)).toBe(0.2);
    expect(axisTicks(0, 1, 5).map(tickText)).toEqual(['0', '0.2', '0.4', '0.6', '0.8', '1']);
  });

  it('draw a scale bar of a round length, at most the pixels given', () => {
    expect(scaleBar(4, 120)).toEqual({ mm: 20, px: 80 });
    expect(scaleBar(4, 200)).toEqual({ mm: 50, px: 200 });
    expect(scaleBar(0.5, 120)).toEqual({ mm: 200, px: 100 });
    expect(scaleBar(0, 120)).toEqual({ mm: 0, px: 0 });
  });
});
