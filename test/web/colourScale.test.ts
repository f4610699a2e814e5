import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { buildLut, NO_DATA_RGB, niceCeil, PURPLE_ORANGE, rasterize, robustAbsLimit, symmetricTicks } from '../../web/colourScale.js';

// Reference: Debian's matplotlib PuOr_r table (ColorBrewer PuOr), made by fixtures/purpleOrange.py.
const reference = JSON.parse(readFileSync(new URL('./fixtures/purpleOrange.json', import.meta.url), 'utf8')) as { lut: number[][] };

describe('colour scales', () => {
  it('the purple-orange LUT matches matplotlib PuOr_r within one level', () => {
    const lut = buildLut(PURPLE_ORANGE, 256);
    let worst = 0;
    for (let i = 0; i < 256; i++) for (let c = 0; c < 3; c++) worst = Math.max(worst, Math.abs(lut[3 * i + c] - reference.lut[i][c]));
    expect(worst).toBeLessThanOrEqual(1);
  });

  it('maps -limit to purple, 0 to the light middle, +limit to orange, NaN to no-data, with y flipped', () => {
    const lut = buildLut(PURPLE_ORANGE, 256);
    // 2x2 map: row 0 = [-100, 0], row 1 = [100, NaN]
    const out = new Uint8ClampedArray(16);
    rasterize([-100, 0, 100, Number.NaN], 2, 2, lut, 100, out);
    // flipY: data row 1 is the top image row.
    expect(Array.from(out.slice(0, 4))).toEqual([127, 59, 8, 255]); // +100, orange end
    expect(Array.from(out.slice(4, 8))).toEqual([...NO_DATA_RGB, 255]);
    expect(Array.from(out.slice(8, 12))).toEqual([45, 0, 75, 255]); // -100, purple end
    const mid = Array.from(out.slice(12, 15));
    for (const c of mid) expect(c).toBeGreaterThan(230); // 0: near white
    // Values past the limit clamp to the ends.
    const out2 = new Uint8ClampedArray(8);
    rasterize([-1e6, 1e6], 2, 1, lut, 100, out2, { flipY: false });
    expect(Array.from(out2)).toEqual([45, 0, 75, 255, 127, 59, 8, 255]);
  });

  it('overlay alpha grows with |value|', () => {
    const lut = buildLut(PURPLE_ORANGE, 256);
    const out = new Uint8ClampedArray(12);
    rasterize([0, -50, 200], 3, 1, lut, 100, out, { alphaByValue: true, flipY: false, noDataAlpha: 0 });
    expect([out[3], out[7], out[11]]).toEqual([0, 127, 255]);
  });

  it('finds a robust symmetric limit and nice colour bar ends', () => {
    const data = new Float64Array(10_000);
    for (let i = 0; i < data.length; i++) data[i] = (i % 2 ? -1 : 1) * (i / 10); // |v| uniform on 0..1000
    data[5] = 1e9; // one hot pixel must not set the range
    data[7] = Number.NaN;
    const lim = robustAbsLimit(data, 0.99, 1e6);
    expect(lim).toBeGreaterThan(985);
    expect(lim).toBeLessThan(995);
    expect(robustAbsLimit([Number.NaN, 0])).toBe(1);
    expect(niceCeil(987)).toBe(1000);
    expect(niceCeil(1001)).toBe(2000);
    expect(niceCeil(2.1e-3)).toBe(2.5e-3);
    expect(niceCeil(2)).toBe(2);
    expect(symmetricTicks(500, 5)).toEqual([-500, -250, 0, 250, 500]);
  });
});
