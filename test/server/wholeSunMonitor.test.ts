// A whole Sun as a monitor region: the invented whole-Sun FITS maps `synth --demo sun` writes
// (CRLN-CAR/CRLT-CAR, 5-degree pixels), posted one by one, pass the intake (a 5-degree pixel is
// about 61 Mm, within the physical limits) and give the same series rows as `process` over the same
// files, sphere columns included (the rotation share, the hemispheres and their budgets), in the
// series route and in the CSV export. Workers run dist/ (build first).
import { mkdtemp, readFile, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { SERIES_COLUMNS } from '../../core/seriesColumns.js';
import { CARRINGTON_SIDEREAL_MICRORAD_S, HOWARD_1990_SIDEREAL } from '../../core/sphere/differentialRotation.js';
import { processFolder } from '../../replay/processCommand.js';
import { synth } from '../../replay/synthCommand.js';
import { ensureCompiledWorker } from '../replay/compiledWorker.js';
import type { TestMonitor } from './support.js';
import { TOKEN, getJson, postFrame, startMonitor, waitIdle } from './support.js';

const quiet = { write: () => true } as unknown as NodeJS.WritableStream;
const SPHERE = ['rate_rotation', 'rate_own_motions', 'rate_north', 'rate_south', 'budget_rotation', 'budget_north', 'budget_south'] as const;

describe('a whole-Sun region in the monitor', () => {
  let dir: string;
  let m: TestMonitor;
  beforeAll(async () => {
    ensureCompiledWorker();
    dir = await mkdtemp(join(tmpdir(), 'helicord-sun-monitor-'));
    m = await startMonitor();
  });
  afterAll(async () => {
    await m?.stop();
    await rm(dir, { recursive: true, force: true });
  });

  it('POSTed maps give the rows process gives for the same files (1e-12), sphere columns included, and the CSV export carries them', async () => {
    const frames = join(dir, 'sun');
    await synth({ out: frames, scene: 'sun', size: 36, frames: 4, demo: { noiseG: 2, seed: 5 } });
    const files = (await readdir(frames)).sort();
    for (const f of files) {
      const r = await postFrame(m.url, 'sun', await readFile(join(frames, f)), { type: 'application/fits' });
      expect(r.status, JSON.stringify(r.body)).toBe(201);
    }
    await waitIdle(m.url);
    const live = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/sun/series')).samples;

    const json = join(dir, 'sun.json');
    await processFolder({ folder: frames, out: join(dir, 'sun.csv'), json, workers: 1, progress: quiet });
    const batch = (JSON.parse(await readFile(json, 'utf8')) as { samples: SeriesRow[] }).samples;

    expect(live).toHaveLength(4);
    expect(batch).toHaveLength(4);
    for (let k = 0; k < 4; k++) {
      for (const c of SERIES_COLUMNS) {
        if (c === 'frame_id') continue; // the monitor's stored id, the archive's index in the batch
        const a = live[k][c], b = batch[k][c];
        if (typeof b === 'number' && typeof a === 'number') {
          expect(Math.abs(a - b), `row ${k} ${c}`).toBeLessThanOrEqual(1e-12 * Math.max(Math.abs(b), Number.MIN_VALUE));
        } else {
          expect(a ?? null, `row ${k} ${c}`).toEqual(b ?? null);
        }
      }
      for (const c of SPHERE) expect(typeof live[k][c], `row ${k} ${c}`).toBe('number');
      expect(live[k].flags).toContain('whole-sun');
    }
    expect(live[3].budget_rotation).not.toBe(0);

    const csv = await (await fetch(`${m.url}/api/regions/sun/export.csv`, { headers: { authorization: `Bearer ${TOKEN}` } })).text();
    const [head, ...lines] = csv.trim().split('\n');
    const cols = head.split(',');
    expect(lines).toHaveLength(4);
    const last = Object.fromEntries(lines[3].split(',').map((v, i) => [cols[i], v]));
    for (const c of SPHERE) expect(Number(last[c]), c).toBe(live[3][c]);

    // The region's analysis.sphere settings reach the engine: the share is linear in the profile
    // seen from the map's frame, so doubling its departure from Carrington's rate doubles it.
    const F = CARRINGTON_SIDEREAL_MICRORAD_S, p = HOWARD_1990_SIDEREAL;
    const put = await fetch(`${m.url}/api/regions/sun2/settings`, {
      method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' },
      body: JSON.stringify({ watchFolder: false, analysis: { sphere: { rotationProfile: { a: F + 2 * (p.a - F), b: 2 * p.b, c: 2 * p.c } } } }),
    });
    expect(put.status, await put.text()).toBeLessThan(300);
    for (const f of files.slice(0, 2)) expect((await postFrame(m.url, 'sun2', await readFile(join(frames, f)), { type: 'application/fits' })).status).toBe(201);
    await waitIdle(m.url);
    const doubled = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/sun2/series')).samples;
    expect(doubled).toHaveLength(2);
    for (let k = 0; k < 2; k++) {
      expect(doubled[k].rate_total).toBe(live[k].rate_total);
      expect(Math.abs(doubled[k].rate_rotation! - 2 * live[k].rate_rotation!)).toBeLessThanOrEqual(1e-9 * Math.abs(live[k].rate_rotation!));
    }
  }, 120_000);
});
