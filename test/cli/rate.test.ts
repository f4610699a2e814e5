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

  it('prints rate_total, rate_total_ga, rate_spin, rate_orbit, rate_background (the series\' columns); the orbit of a circling pair is -(1/pi) Phi1 Phi2 Omega', async () => {
    const out = capture(), err = capture();
    expect(await main(['rate', file, '--footpoints', '--noise', '2'], out.stream, err.stream)).toBe(0);
    const r = JSON.parse(out.text());
    for (const k of ['rate_total', 'rate_total_ga', 'rate_spin', 'rate_orbit', 'rate_background', 'sigma_rate_total']) expect(typeof r[k]).toBe('number');
    const expected = (-1 / Math.PI) * labelFlux(f, 1) * labelFlux(f, 2) * Omega;
    expect(Math.abs(r.rate_orbit - expected) / Math.abs(expected)).toBeLessThan(0.01);
    expect(Math.abs(r.rate_spin + r.rate_orbit + r.rate_background - r.rate_total)).toBeLessThan(1e-9 * Math.abs(r.rate_total));
    expect(r.pair_ids).toEqual([1, 2]);
    expect(r.orbit_matrix[0][1]).toBeCloseTo(r.rate_orbit, -20);
    expect(r.rate_emergence).toBeNull();
  });

  it('--labels none puts everything in the background', async () => {
    const out = capture();
    expect(await main(['rate', file, '--labels', 'none'], out.stream, capture().stream)).toBe(0);
    const r = JSON.parse(out.text());
    expect(r.rate_spin).toBe(0);
    expect(r.rate_background).toBe(r.rate_total);
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
    expect(r.footpoints).toHaveLength(2);
    expect(r.pair_ids).toHaveLength(2);
    expect(r.velocity_notes.join(' ')).toMatch(/axisymmetric/);
    expect(Math.abs(r.rate_spin + r.rate_orbit + r.rate_background - r.rate_total)).toBeLessThan(1e-9 * Math.abs(r.rate_total));
  });

  it('one frame without velocity says it needs the next frame', async () => {
    const err = capture();
    expect(await main(['rate', a], capture().stream, err.stream)).toBe(1);
    expect(err.text()).toMatch(/a\.json: vx\/vy: .*next frame/);
  });

  it('an unknown method is refused as a bad argument, with the choices', async () => {
    const err = capture();
    expect(await main(['rate', a, b, '--method', 'guess'], capture().stream, err.stream)).toBe(2);
    expect(err.text()).toMatch(/option --method takes auto, dave, dave4vm, lct; got "guess"/);
  });
});

describe('helicord rate over a sequence of frames', () => {
  // An elongated spot (axis ratio 2) turning in place at 10 deg/h beside a static round spot of
  // the other polarity, 8 G of Gaussian noise, frames 45 s apart without velocity. A rigidly
  // turning unipolar footpoint injects the spin -(omega/2pi) Phi^2 (Longcope et al. 2007).
  const dir = mkdtempSync(join(tmpdir(), 'helicord-rate3-'));
  const omega = (10 * Math.PI / 180) / 3600, N = 96, d = 0.36, cadenceS = 45, t0 = Date.parse('2026-05-02T10:00:00Z');
  const frameAt = (k: number) => {
    let seed = 7919 + 104729 * k;
    const uniform = () => { seed = (seed * 1103515245 + 12345) % 2147483648; return (seed + 0.5) / 2147483648; };
    const bn = new Float64Array(N * N);
    const angle = 0.4 + omega * k * cadenceS;
    for (let iy = 0; iy < N; iy++) for (let ix = 0; ix < N; ix++) {
      const dx = ix * d - 13, dy = iy * d - 17;
      const u = dx * Math.cos(angle) + dy * Math.sin(angle), v = -dx * Math.sin(angle) + dy * Math.cos(angle);
      const noise = 8 * Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
      bn[iy * N + ix] = 1500 * Math.exp(-(u * u) / 18 - (v * v) / 4.5)
        - 1200 * Math.exp(-((ix * d - 24) ** 2 + (iy * d - 19) ** 2) / 8) + noise;
    }
    return { time: t0 + k * cadenceS * 1000, nx: N, ny: N, dx: d, dy: d, bn };
  };
  // 17 frames: the last is 720 s (the default motion baseline) after the first.
  const files = Array.from({ length: 17 }, (_, k) => {
    const f = join(dir, `f${String(k).padStart(2, '0')}.json`);
    writeFileSync(f, JSON.stringify(frameToJson(frameAt(k))));
    return f;
  });
  const rate = async (list: string[]) => {
    const out = capture(), err = capture();
    const code = await main(['rate', ...list, '--footpoints'], out.stream, err.stream);
    expect(code, err.text()).toBe(0);
    const r = JSON.parse(out.text());
    const spot = r.footpoints.find((f: { polarity: number }) => f.polarity === 1);
    return { r, spot, truth: -omega * spot.flux ** 2 / (2 * Math.PI) };
  };

  it('reports the last pair, with footpoint motions over the motion baseline: the turning spot\'s spin within the pattern fit\'s reach', async () => {
    // Given in any order: taken in time order.
    const shuffled = [...files.slice(8), ...files.slice(0, 8).reverse()];
    const { r, spot, truth } = await rate(shuffled);
    expect(r.time).toBe(new Date(t0 + 15.5 * cadenceS * 1000).toISOString());
    expect(r.dt_s).toBe(cadenceS);
    expect(r.sample_frames).toEqual([files[15], files[16]]);
    expect(r.velocity_notes.join(' ')).toMatch(/Footpoint motions over 720 s \(the motion baseline\)/);
    // docs/footpoints.md: the pattern fit is within 3 % without noise, and the spin from a
    // tracked rotation within 5 %; the noise adds what the fit reports (3 of its 1-sigma).
    expect(spot.omega_method).toBe('pattern');
    const sigma = spot.omega_error / omega;
    expect(Math.abs(spot.omega / omega - 1)).toBeLessThanOrEqual(0.03 + 3 * sigma);
    expect(Math.abs(spot.spin / truth - 1)).toBeLessThanOrEqual(0.05 + 3 * sigma);
    // The last pair alone measures the rotation over 45 s: the angle error is the same, the rate
    // error 16 times larger (720 s / 45 s); the sequence is what makes the spin usable.
    const pair = await rate(files.slice(15));
    expect(pair.r.velocity_notes.join(' ')).not.toMatch(/motion baseline/);
    const ratio = pair.spot.omega_error / spot.omega_error;
    expect(ratio).toBeGreaterThan(12);
    expect(ratio).toBeLessThan(21);
  });

  it('frames with their velocities each give a sample: it prints the last one, lists the others and says so; footpoints are tracked through', async () => {
    const Omega = 2e-6;
    const at = (k: number) => spotFrame(64, 64, 0.5, [
      { x: 10, y: 16, peak: 1000, sigma: 1, omega: Omega },
      { x: 22, y: 16, peak: -900, sigma: 1 },
    ], t0 + k * 720_000);
    const [a, b, c] = [0, 1, 2].map((k) => {
      const f = join(dir, `v${k}.json`);
      const frame = at(k);
      writeFileSync(f, JSON.stringify(frameToJson({ ...frame, labels: undefined })));
      return f;
    });
    const out = capture();
    expect(await main(['rate', c, a, b, '--footpoints'], out.stream, capture().stream)).toBe(0);
    const r = JSON.parse(out.text());
    expect(r.velocity_method).toBe('given');
    expect(r.time).toBe(new Date(t0 + 2 * 720_000).toISOString());
    expect(r.sample_frames).toEqual([c]);
    expect(r.velocity_notes.join(' ')).toMatch(/3 of the frames carry their velocity .* the last frame's \(.*v2\.json\); the others are in other_samples/);
    // The earlier frames' own samples, in time order: the same spinning spot, so the same rate.
    expect(r.other_samples.map((o: { sample_frames: string[] }) => o.sample_frames)).toEqual([[a], [b]]);
    for (const o of r.other_samples) expect(Math.abs(o.rate_total - r.rate_total)).toBeLessThan(1e-9 * Math.abs(r.rate_total));
    // Tracked from the first frame: the same two ids, continued, with their winding followed.
    expect(r.footpoints.map((f: { id: number; status: string; parent: number }) => [f.id, f.status, f.parent])).toEqual([[1, 'continued', 1], [2, 'continued', 2]]);
    // The positive spot spins at Omega with the given velocity: -(Omega/2pi) Phi^2 (Longcope et al. 2007).
    const spot = r.footpoints[0];
    expect(Math.abs(spot.spin / (-Omega * spot.flux ** 2 / (2 * Math.PI)) - 1)).toBeLessThan(0.05);
  });

  it('refuses a time given twice, naming both files', async () => {
    const copy = join(dir, 'again.json');
    writeFileSync(copy, JSON.stringify(frameToJson(frameAt(3))));
    const err = capture();
    expect(await main(['rate', files[2], files[3], copy], capture().stream, err.stream)).toBe(1);
    expect(err.text()).toMatch(/f03\.json: time: 2026-05-02T10:02:15\.000Z is also the time of .*again\.json: give each frame once/);
  });
});
