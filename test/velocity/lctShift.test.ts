import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { localCorrelationTracking } from '../../core/velocity/lct.js';

interface ShiftFixture {
  nx: number; ny: number; a: string;
  cases: { imposed: [number, number]; skimage: [number, number]; b: string }[];
}

const fixture = JSON.parse(readFileSync(new URL('../fixtures/velocity/shift_fixture.json', import.meta.url), 'utf8')) as ShiftFixture;

function decode(b64: string): Float64Array {
  const bytes = Buffer.from(b64, 'base64');
  const f32 = new Float32Array(bytes.buffer, bytes.byteOffset, bytes.byteLength / 4);
  return Float64Array.from(f32);
}

describe('local correlation tracking of rigid shifts', () => {
  const { nx, ny } = fixture;
  const a = decode(fixture.a);
  // Windows whose 3-sigma disc stays inside the grid (margin 16 px for sigma 4 and shifts up to 3 px).
  const margin = 16;
  for (const c of fixture.cases) {
    it(`shift (${c.imposed.join(', ')}) px agrees with skimage phase_cross_correlation to 0.05 px`, () => {
      const b = decode(c.b);
      const r = localCorrelationTracking(a, b, nx, ny, { sigma: 4, stride: 4, minSignal: 10, minCorrelation: 0.5 });
      let worst = 0, count = 0;
      for (let y = margin; y < ny - margin; y++) for (let x = margin; x < nx - margin; x++) {
        const i = y * nx + x;
        // Source: scikit-image phase_cross_correlation (upsample_factor 100), committed fixture
        // made by test/fixtures/velocity/make_shift_fixture.py.
        const e = Math.hypot(r.sx[i] - c.skimage[0], r.sy[i] - c.skimage[1]);
        worst = Math.max(worst, e);
        count++;
      }
      expect(count).toBeGreaterThan(900);
      expect(worst).toBeLessThanOrEqual(0.05);
    });
  }
});
