// The page as a store and panels: every module of web/ except the entry (main.ts) can be imported
// without a DOM and does nothing on import (no page element looked up, no timer, no global set);
// the store tells listeners which keys changed; viewer messages change the state as documented.
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it, vi } from 'vitest';
import { createPageStore, initialPageState } from '../../web/pageStore.js';
import { applyViewerMessage } from '../../web/viewerMessages.js';
import { frameIndex, mergeFrames } from '../../web/frameList.js';
import type { WireAlert, WireSample } from '../../web/wire.js';

const webDir = fileURLToPath(new URL('../../web/', import.meta.url));

function modules(dir: string, prefix = ''): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    if (e.isDirectory()) out.push(...modules(join(dir, e.name), `${prefix}${e.name}/`));
    else if (e.name.endsWith('.ts') && !e.name.endsWith('.d.ts') && e.name !== 'main.ts') out.push(`${prefix}${e.name}`);
  }
  return out;
}

describe('web modules have no side effects on import', () => {
  it('imports every module but the entry without a DOM, starting no timer and setting no global', async () => {
    const names = modules(webDir);
    expect(names).toContain('startPage.ts');
    expect(names).toContain('panels/mapPanel.ts');
    const timers = vi.spyOn(globalThis, 'setTimeout');
    const intervals = vi.spyOn(globalThis, 'setInterval');
    const before = new Set(Object.keys(globalThis));
    for (const name of names) await import(join(webDir, name));
    expect(timers).not.toHaveBeenCalled();
    expect(intervals).not.toHaveBeenCalled();
    expect(Object.keys(globalThis).filter((k) => !before.has(k))).toEqual([]);
    expect((globalThis as { helicordProbe?: unknown }).helicordProbe).toBeUndefined();
    timers.mockRestore();
    intervals.mockRestore();
  });
});

const sample = (time: string, frame: number): WireSample => ({
  time, dt_s: 720, rate_total: 1, rate_spin: 0, rate_orbit: 0, rate_background: 0, budget_total: 2, budget_spin: 0, budget_orbit: 0,
  budget_background: 0, rate_total_ga: 1, rate_emergence: null, rate_shear: null, sigma_rate_total: 0, sigma_budget_total: 0,
  velocity_method: 'dave', split_method: 'labels', noise_g: 5, masked_fraction: 0, flags: [], frame_id: frame,
  sigma_rate_spin: 0, sigma_rate_orbit: 0, flux_unsigned: null, budget_normalised: null, centre_lon_deg: null, centre_lat_deg: null, centre_disk_angle_deg: null,
});

describe('the page store', () => {
  it('tells listeners which keys changed, and nothing when nothing did', () => {
    const store = createPageStore();
    const heard: string[][] = [];
    store.subscribe((_s, changed) => heard.push([...changed].sort()));
    store.set({ follow: true, pickedIndex: -1 }); // the initial values: no change
    store.set({ follow: false, pickedIndex: 3 });
    store.set({ regionNote: 'x', follow: false });
    expect(heard).toEqual([['follow', 'pickedIndex'], ['regionNote']]);
    expect(store.get().pickedIndex).toBe(3);
  });
});

describe('viewer messages', () => {
  it('keep the picked sample picked by its time when older samples arrive', () => {
    let s = { ...initialPageState() };
    s = { ...s, ...applyViewerMessage(s, { type: 'sample', sample: sample('2026-03-14T10:00:00Z', 5) }, 0) };
    s = { ...s, ...applyViewerMessage(s, { type: 'sample', sample: sample('2026-03-14T10:12:00Z', 6) }, 0) };
    s = { ...s, pickedIndex: 1 };
    const next = { ...s, ...applyViewerMessage(s, { type: 'backfill', samples: [sample('2026-03-14T09:48:00Z', 4)] }, 0) };
    expect(next.series.map((p) => p.s.frame_id)).toEqual([4, 5, 6]);
    expect(next.pickedIndex).toBe(2); // still the 10:12 sample
  });

  it('take the gap factor and the latest frame from the snapshot, and note when an alert arrived', () => {
    const s = initialPageState();
    const snap = applyViewerMessage(s, {
      type: 'snapshot', region: 'r', samples: [], gaps: [], alerts: [], status: { last_frame_time: null, cadence_s: 720, refusals: 0, gaps: 0, queue: 0, queue_limit: 16, disk_full: false, replay: null },
      latest_frame: { frame_id: 9, time: '2026-03-14T10:00:00Z' }, gap_factor: 4,
    }, 0);
    expect(snap.gapFactor).toBe(4);
    expect(snap.frames?.map((f) => f.id)).toEqual(['9']);
    const alert = { id: 'a1', rule: 'budget', state: 'raised' } as WireAlert;
    const after = applyViewerMessage(s, { type: 'alert', alert }, 1234);
    expect(after.alertArrivals?.get('a1')).toBe(1234);
  });
});

describe('frame numbering', () => {
  it('numbers frames by their place among the stored frames, in time order, one per id', () => {
    let list = mergeFrames([], [{ frame_id: 12, time: '2026-03-14T10:12:00Z' }, { frame_id: 10, time: '2026-03-14T10:00:00Z' }]);
    list = mergeFrames(list, [{ frame_id: 11, time: '2026-03-14T10:06:00Z' }, { frame_id: 12, time: '2026-03-14T10:12:00Z' }]);
    expect(list.map((f) => f.id)).toEqual(['10', '11', '12']);
    expect(frameIndex(list, 12)).toBe(2);
    expect(frameIndex(list, 99)).toBe(-1);
  });
});

import { sendFrameCommands } from '../../web/firstScreenText.js';

describe('the first screen of an empty monitor', () => {
  it('gives commands with the page address, the region name and where the token is', () => {
    const text = sendFrameCommands('http://127.0.0.1:8750', 'ar-test-2026-12-02');
    expect(text).toContain('TOKEN=$(cat ./data/token)');
    expect(text).toContain('--data-binary @frame.fits http://127.0.0.1:8750/api/regions/ar-test-2026-12-02/frames');
    expect(text).toContain("-H 'Content-Type: application/json'");
    expect(text).toContain('mkdir -p ./data/inbox/ar-test-2026-12-02 && cp frame.fits ./data/inbox/ar-test-2026-12-02/');
    // Short enough lines for a narrow window.
    for (const line of text.split('\n')) expect(line.length).toBeLessThanOrEqual(100);
  });
});
