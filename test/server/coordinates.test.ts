// The monitor keeps a frame's heliographic coordinates: its series rows carry the patch centre and
// its maps.fits export the input's WCS, as the batch does (docs/fits.md). A scene of our own: the
// circling pair on a cylindrical-equal-area Carrington grid centred at (200, -15) degrees seen from
// an observer at Carrington longitude 190, so the centre is 10 degrees west of the central meridian.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeFits } from '../../core/fits/writeImage.js';
import { readFitsImages } from '../../core/fits/readImage.js';
import { headerValue } from '../../core/fits/header.js';
import { MM_PER_HELIOGRAPHIC_DEG } from '../../core/units.js';
import type { Frame } from '../../core/frame.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import type { TestMonitor } from './support.js';
import { T0, circlingFrame, getJson, postFrame, startMonitor, waitIdle } from './support.js';

function ceaFits(f: Frame): Buffer {
  const deg = f.dx / MM_PER_HELIOGRAPHIC_DEG;
  return Buffer.from(writeFits({
    images: [{
      name: 'BN', nx: f.nx, ny: f.ny, values: f.bn, bunit: 'G',
      wcs: { ctype: ['CRLN-CEA', 'CRLT-CEA'], cunit: ['deg', 'deg'], cdelt: [deg, deg], crpix: [(f.nx + 1) / 2, (f.ny + 1) / 2], crval: [200, -15] },
      keywords: [
        { key: 'DATE-OBS', value: new Date(f.time).toISOString().slice(0, 23) },
        { key: 'CRLN_OBS', value: 190 }, { key: 'CRLT_OBS', value: 1.5 }, { key: 'DSUN_OBS', value: 1.496e11 },
      ],
    }],
  }));
}

describe('coordinates through the monitor', () => {
  let m: TestMonitor;
  const times = [T0, T0 + 120_000, T0 + 240_000];
  beforeAll(async () => {
    m = await startMonitor();
    for (const t of times) {
      const f = circlingFrame(t);
      const r = await postFrame(m.url, 'ar-coords-test', ceaFits({ ...f, vx: undefined, vy: undefined, labels: undefined }), { type: 'application/fits' });
      expect(r.status, JSON.stringify(r.body)).toBe(201);
    }
    await waitIdle(m.url);
  });
  afterAll(async () => { await m.stop(); });

  it('series rows carry the patch centre in Stonyhurst degrees (10 degrees west, latitude -15)', async () => {
    const { samples } = await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ar-coords-test/series');
    expect(samples).toHaveLength(2);
    for (const s of samples) {
      expect(s.centre_lon_deg).toBeCloseTo(10, 9);
      expect(s.centre_lat_deg).toBeCloseTo(-15, 9);
      expect(s.centre_disk_angle_deg).toBeGreaterThan(10);
      expect(s.centre_disk_angle_deg).toBeLessThan(20);
    }
  });

  it('maps.fits keeps the input WCS', async () => {
    const { frames } = await getJson<{ frames: { frame_id: number }[] }>(m.url, '/api/regions/ar-coords-test/frames');
    const r = await fetch(`${m.url}/api/regions/ar-coords-test/frames/${frames.at(-1)!.frame_id}/maps.fits`);
    expect(r.status).toBe(200);
    const images = readFitsImages(new Uint8Array(await r.arrayBuffer()), 'maps.fits');
    const bn = images.find((i) => i.name === 'BN')!;
    const get = (key: string) => headerValue(bn.header, key);
    expect([get('CTYPE1'), get('CTYPE2')]).toEqual(['CRLN-CEA', 'CRLT-CEA']);
    expect(Number(get('CRVAL1'))).toBeCloseTo(200, 9);
    expect(Number(get('CRLN_OBS'))).toBeCloseTo(190, 9);
  });
});
