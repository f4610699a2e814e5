// `helicord rate` end to end through main(): JSON out with the documented keys, clear errors.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { frameToJson } from '../../core/frameJson.js';
import { main } from '../../server/cli.js';
import { labelFlux, spotFrame } from '../support/scenes.js';

function capture(): { stream: Writable; text: () => string } {
  let s = '';
  return { stream: new Writable({ write(c, _e, cb) { s += c.toString(); cb(); } }), text: () => s };
}

describe('helicord rate', () => {
  const dir = mkdtempSync(join(tmpdir(), 'helicord-rate-'));
  const Omega = 3e-6, cx = 16, cy = 16;
  const v = (x: number, y: number) => ({ vx: -Omega * 1000 * (y - cy), vy: Omega * 1000 * (x - cx) });
  const f = spotFrame(64, 64, 0.5, [
    { x: cx - 6, y: cy, peak: 1000, sigma: 0.6, ...v(cx - 6, cy) },
    { x: cx + 6, y: cy, peak: -800, sigma: 0.6, ...v(cx + 6, cy) },
  ], Date.parse('2026-03-14T06:00:00Z'));
  const file = join(dir, 'pair.json');
  writeFileSync(file, JSON.stringify(frameToJson(f)));

  it('prints total, total_ga, spin, orbit, background; the orbit of a circling pair is -(1/pi) Phi1 Phi2 Omega', async () => {
    const out = capture(), err = capture();
    expect(await main(['rate', file, '--footpoints', '--noise', '2'], out.stream, err.stream)).toBe(0);
    const r = JSON.parse(out.text());
    for (const k of ['total', 'total_ga', 'spin', 'orbit', 'background']) expect(typeof r[k]).toBe('number');
    const expected = (-1 / Math.PI) * labelFlux(f, 1) * labelFlux(f, 2) * Omega;
    expect(Math.abs(r.orbit - expected) / Math.abs(expected)).toBeLessThan(0.01);
    expect(Math.abs(r.spin + r.orbit + r.background - r.total)).toBeLessThan(1e-9 * Math.abs(r.total));
    expect(r.pair_ids).toEqual([1, 2]);
    expect(r.orbit_matrix[0][1]).toBeCloseTo(r.orbit, -20);
    expect(r.emergence).toBeUndefined();
  });

  it('--labels none puts everything in the background', async () => {
    const out = capture();
    expect(await main(['rate', file, '--labels', 'none'], out.stream, capture().stream)).toBe(0);
    const r = JSON.parse(out.text());
    expect(r.spin).toBe(0);
    expect(r.background).toBe(r.total);
  });

  it('a bad file is named with its problem and exits 1', async () => {
    const bad = join(dir, 'bad.json');
    writeFileSync(bad, JSON.stringify({ ...frameToJson(f), dx: -1 }));
    const err = capture();
    expect(await main(['rate', bad], capture().stream, err.stream)).toBe(1);
    expect(err.text()).toMatch(/bad\.json: dx: pixel size must be positive/);
  });

  it('an unknown command exits 2 and points to --help', async () => {
    const err = capture();
    expect(await main(['frobnicate'], capture().stream, err.stream)).toBe(2);
    expect(err.text()).toMatch(/--help/);
  });
});

describe('helicord rate with detection and inference', () => {
  const dir = mkdtempSync(join(tmpdir(), 'helicord-rate2-'));
  const Omega = 2 * Math.PI / (6 * 3600), cx = 24, cy = 24, R = 6;
  const frameAt = (step: number) => {
    const a = Omega * step * 120;
    const spot = (phase: number, peak: number) => ({ x: cx + R * Math.cos(a + phase), y: cy + R * Math.sin(a + phase), peak, sigma: 1.2 });
    const f = spotFrame(96, 96, 0.5, [spot(0, 1200), spot(Math.PI, -1000)], Date.parse('2026-05-02T10:00:00Z') + step * 120_000);
    return { time: f.time, nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy, bn: f.bn };
  };
  const a = join(dir, 'a.json'), b = join(dir, 'b.json');
  writeFileSync(a, JSON.stringify(frameToJson(frameAt(0))));
  writeFileSync(b, JSON.stringify(frameToJson(frameAt(1))));

  it('two frames without velocity: inferred velocity at the mid-time, footpoints detected, the caveat stated', async () => {
    const out = capture();
    expect(await main(['rate', a, b, '--footpoints'], out.stream, capture().stream)).toBe(0);
    const r = JSON.parse(out.text());
    expect(r.velocity_method).toBe('dave');
    expect(r.time).toBe('2026-05-02T10:01:00.000Z');
    expect(r.dt_s).toBe(120);
    expect(r.footpoint_count).toBe(2);
    expect(r.footpoints.footpoints).toHaveLength(2);
    expect(r.footpoints.pairMatrix.ids).toHaveLength(2);
    expect(r.velocity_notes.join(' ')).toMatch(/axisymmetric/);
    expect(Math.abs(r.spin + r.orbit + r.background - r.total)).toBeLessThan(1e-9 * Math.abs(r.total));
  });

  it('one frame without velocity says it needs the next frame', async () => {
    const err = capture();
    expect(await main(['rate', a], capture().stream, err.stream)).toBe(1);
    expect(err.text()).toMatch(/a\.json: vx\/vy: .*next frame/);
  });

  it('an unknown method is refused', async () => {
    const err = capture();
    expect(await main(['rate', a, b, '--method', 'guess'], capture().stream, err.stream)).toBe(1);
    expect(err.text()).toMatch(/--method must be/);
  });
});
