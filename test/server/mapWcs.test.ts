// The map route carries the frame's world coordinates when its headers had them (docs/api.md): a
// frame on a Carrington cylindrical-equal-area grid (CRLN-CEA/CRLT-CEA in degrees, FITS WCS paper
// II) gives a map answer whose wcs maps the reference pixel to the reference value, and whose other
// pixels are where the CEA projection puts them (Calabretta & Greisen 2002); a frame without one
// gives wcs null.
import { describe, expect, it } from 'vitest';
import { pixelToWorld } from '../../core/frameAssembly/wcs.js';
import type { FrameWcs } from '../../core/frameAssembly/wcs.js';
import { writeFits } from '../../core/fits/writeImage.js';
import { TOKEN, circlingFrame, frameBody, getJson, startMonitor, waitIdle } from './support.js';

const NX = 48, NY = 40;
const CDELT = [0.03, 0.03] as const; // deg (CEA rows: sin of the native latitude in units of pi/180, WCS paper II)
const CRVAL = [121.25, -18.5] as const;

function ceaFrameFits(): Uint8Array {
  const bn = new Float64Array(NX * NY), v = new Float64Array(NX * NY);
  for (let iy = 0; iy < NY; iy++) for (let ix = 0; ix < NX; ix++) {
    bn[iy * NX + ix] = 1200 * Math.exp(-((ix - 18) ** 2 + (iy - 20) ** 2) / 18) - 1100 * Math.exp(-((ix - 30) ** 2 + (iy - 20) ** 2) / 18);
  }
  const wcs = { ctype: ['CRLN-CEA', 'CRLT-CEA'] as [string, string], cunit: ['deg', 'deg'] as [string, string], cdelt: CDELT, crpix: [24.5, 20.5] as [number, number], crval: CRVAL, pv: { PV2_1: 1 } };
  return writeFits({
    primary: [{ key: 'DATE-OBS', value: '2026-03-14T06:00:00.000' }, { key: 'TIMESYS', value: 'UTC' }, { key: 'RSUN_REF', value: 696e6 }],
    images: [
      { name: 'BN', nx: NX, ny: NY, values: bn, bunit: 'G', wcs },
      { name: 'VX', nx: NX, ny: NY, values: v, bunit: 'km/s', wcs },
      { name: 'VY', nx: NX, ny: NY, values: v, bunit: 'km/s', wcs },
    ],
  });
}

/** Great-circle angle between two points, degrees. */
function arcDeg(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const r = Math.PI / 180;
  const c = Math.sin(lat1 * r) * Math.sin(lat2 * r) + Math.cos(lat1 * r) * Math.cos(lat2 * r) * Math.cos((lon2 - lon1) * r);
  return Math.acos(Math.min(1, c)) / r;
}

describe('the map route and world coordinates', () => {
  it('a CEA frame: wcs with its projection; a frame without headers: wcs null', async () => {
    const m = await startMonitor();
    try {
      const r = await fetch(`${m.url}/api/regions/cea/frames`, { method: 'POST', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/fits' }, body: Buffer.from(ceaFrameFits()) });
      const answer = await r.json() as { frame_id: number; error?: string };
      expect(r.status, answer.error).toBe(201);
      await waitIdle(m.url);
      for (const layer of ['bn', 'gtheta']) {
        const map = await getJson<{ wcs: FrameWcs | null }>(m.url, `/api/regions/cea/frames/${answer.frame_id}/map?layer=${layer}`);
        expect(map.wcs?.ctype).toEqual(['CRLN-CEA', 'CRLT-CEA']);
        // pixelToWorld takes 1-based pixels: the reference pixel is the reference value.
        const [lon0, lat0] = pixelToWorld(map.wcs!, 24.5, 20.5)!;
        expect(lon0).toBeCloseTo(CRVAL[0], 9);
        expect(lat0).toBeCloseTo(CRVAL[1], 9);
        // A cylindrical projection with its reference off the equator is oblique (WCS paper II): a
        // step along x follows the native equator (10 pixels = 10 cdelt of arc); a step along y
        // from the reference is sin(native latitude) = 10 cdelt2 pi/180 for CEA with PV2_1 = 1.
        const east = pixelToWorld(map.wcs!, 34.5, 20.5)!;
        expect(arcDeg(lon0, lat0, east[0], east[1])).toBeCloseTo(10 * CDELT[0], 9);
        expect(east[0]).toBeGreaterThan(lon0);
        const north = pixelToWorld(map.wcs!, 24.5, 30.5)!;
        expect(arcDeg(lon0, lat0, north[0], north[1])).toBeCloseTo((180 / Math.PI) * Math.asin((10 * CDELT[1] * Math.PI) / 180), 9);
        expect(north[1]).toBeGreaterThan(lat0);
      }
      const plain = await fetch(`${m.url}/api/regions/flat/frames`, { method: 'POST', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: frameBody(circlingFrame(Date.UTC(2026, 2, 14, 6))) });
      const id = ((await plain.json()) as { frame_id: number }).frame_id;
      expect((await getJson<{ wcs: unknown }>(m.url, `/api/regions/flat/frames/${id}/map?layer=bn`)).wcs).toBeNull();
    } finally {
      await m.stop();
    }
  });
});
