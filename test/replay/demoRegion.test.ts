// The demo region: determinism, its noise, the consistency of its imposed motions with the
// evolution of its field, and a story that crosses the default alert thresholds.
import { describe, expect, it } from 'vitest';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { SCENARIO_HOURS } from '../../replay/demo/demoScenario.js';
import { measureRate } from '../../core/measureRate.js';
import { CM_PER_MM, KM_PER_MM } from '../../core/units.js';

describe('demo region', () => {
  it('is deterministic and random-access: the same frame whatever the order or instance', () => {
    const a = demoRegion({ size: 48, frames: 20, seed: 7 });
    const b = demoRegion({ size: 48, frames: 20, seed: 7 });
    const late = b.frameAt(13);
    const early = a.frameAt(2);
    expect(Array.from(a.frameAt(13).bn)).toEqual(Array.from(late.bn));
    expect(Array.from(b.frameAt(2).bn)).toEqual(Array.from(early.bn));
    const c = demoRegion({ size: 48, frames: 20, seed: 8 });
    expect(c.frameAt(13).bn[0]).not.toBe(late.bn[0]);
    expect(() => a.frameAt(20)).toThrow(/outside 0..19/);
  });

  it('sizes, cadence and options: the whole 72 h story whatever the frame count', () => {
    const d = demoRegion();
    expect(d.grid).toEqual({ nx: 128, ny: 128, dx: 0.72, dy: 0.72 });
    expect(d.cadenceS).toBe(720);
    expect(d.frameCount).toBe(361);
    const short = demoRegion({ frames: 73 });
    expect(short.cadenceS).toBe(3600);
    expect(short.timeAt(72) - short.timeAt(0)).toBe(72 * 3600e3);
    const f = demoRegion({ size: 32, frames: 4, withVelocity: true }).frameAt(1);
    expect(f.vx?.length).toBe(32 * 32);
    expect(demoRegion({ size: 32, frames: 4 }).frameAt(1).vx).toBeUndefined();
    expect(() => demoRegion({ size: 0 })).toThrow(/size/);
    // A stretch of the story at its own pace: 12 frames of 12 min from story hour 20.
    const stretch = demoRegion({ frames: 12, cadenceS: 720, storyH: 72, storyStartH: 20 });
    expect(stretch.secondsPerStoryHour).toBe(3600);
    expect(stretch.componentsAt(5)).toEqual(d.componentsAt(105));
  });

  it('adds Gaussian noise of the stated level (5 G by default) and nothing else', () => {
    const d = demoRegion({ size: 96, frames: 10 });
    const noisy = d.frameAt(5), clean = d.cleanFrameAt(5);
    let s = 0, m = 0;
    for (let k = 0; k < noisy.bn.length; k++) { const e = noisy.bn[k] - clean.bn[k]; s += e * e; m += e; }
    const n = noisy.bn.length;
    // Standard error of a sample sigma over 9216 values is sigma/sqrt(2n), about 0.7 %.
    expect(Math.sqrt(s / n)).toBeGreaterThan(5 * 0.97);
    expect(Math.sqrt(s / n)).toBeLessThan(5 * 1.03);
    expect(Math.abs(m / n)).toBeLessThan(0.2);
  });

  it('moves its field with the imposed velocity: dBn/dt = -div(Bn u) (Demoulin & Berger 2003) after emergence', () => {
    // At 36 h the flux has stopped growing, the spot turns and the polarities shear: the frame
    // before and after (30 min either side) differ by the advection of the field, to the error
    // of the central differences and of the overlap of the components' weights.
    const d = demoRegion({ frames: 145 });
    const i = 72;
    const a = d.cleanFrameAt(i - 1), b = d.cleanFrameAt(i + 1), c = d.cleanFrameAt(i);
    const { nx, ny, dx } = c;
    const dt = 2 * d.cadenceS;
    let num = 0, den = 0;
    const fx = (k: number) => c.bn[k] * c.vx![k], fy = (k: number) => c.bn[k] * c.vy![k];
    for (let y = 1; y < ny - 1; y++) for (let x = 1; x < nx - 1; x++) {
      const k = y * nx + x;
      const dbdt = (b.bn[k] - a.bn[k]) / dt;
      const div = ((fx(k + 1) - fx(k - 1)) / (2 * dx) + (fy(k + nx) - fy(k - nx)) / (2 * dx)) / KM_PER_MM;
      num += (dbdt + div) ** 2;
      den += dbdt * dbdt;
    }
    expect(Math.sqrt(num / den)).toBeLessThan(0.06);
  });

  it("gives the leading spot the spin of a rigidly turning footpoint, -(omega/2pi) Phi^2 (Longcope et al. 2007)", () => {
    const d = demoRegion({ frames: 145 });
    const i = 52; // 26 h: the turn is at its fastest
    const c = d.cleanFrameAt(i);
    const r = measureRate({ frame: c, noiseG: 0 });
    let phi = 0;
    for (let k = 0; k < c.bn.length; k++) if (c.labels![k] === 1) phi += c.bn[k] * c.dx * c.dy * CM_PER_MM * CM_PER_MM;
    const omega = d.componentsAt(i)[0].omega / d.secondsPerStoryHour;
    expect(d.secondsPerStoryHour).toBe(((d.frameCount - 1) * d.cadenceS) / SCENARIO_HOURS);
    const spin = r.split!.spin[r.split!.ids.indexOf(1)];
    // The velocity fades in the spot's outer pixels (the 10 G weight floor): a few per cent less.
    expect(spin / (-(omega / (2 * Math.PI)) * phi * phi)).toBeGreaterThan(0.95);
    expect(spin / (-(omega / (2 * Math.PI)) * phi * phi)).toBeLessThan(1.01);
    expect(omega).toBeGreaterThan(0);
    expect(spin).toBeLessThan(0);
  });

  it('gives the turning spot a shape whose rotation shows in the frames (not axisymmetric)', () => {
    // A round footpoint turning in place leaves the frames unchanged; ours is elongated: the
    // flux-weighted second moments of the spot differ by more than a factor 2 along its axes.
    const c = demoRegion({ frames: 145 }).cleanFrameAt(72);
    let w = 0, mx = 0, my = 0;
    const pts: [number, number, number][] = [];
    for (let k = 0; k < c.bn.length; k++) {
      if (c.labels![k] !== 1) continue;
      const x = (k % c.nx) * c.dx, y = Math.floor(k / c.nx) * c.dy, b = c.bn[k];
      pts.push([x, y, b]); w += b; mx += b * x; my += b * y;
    }
    mx /= w; my /= w;
    let sxx = 0, syy = 0, sxy = 0;
    for (const [x, y, b] of pts) { sxx += b * (x - mx) ** 2; syy += b * (y - my) ** 2; sxy += b * (x - mx) * (y - my); }
    const tr = sxx + syy, det = sxx * syy - sxy * sxy;
    const l1 = tr / 2 + Math.sqrt(tr * tr / 4 - det), l2 = tr / 2 - Math.sqrt(tr * tr / 4 - det);
    expect(l1 / l2).toBeGreaterThan(2);
  });

  it('builds up past the default thresholds and then stays on a plateau', () => {
    const d = demoRegion({ frames: 73, size: 96 });
    let budget = 0, peak = 0, prev = 0, crossedAt = -1, budgetAt48 = 0;
    for (let i = 0; i < d.frameCount; i++) {
      const t = d.truthAt(i);
      expect(t.spin + t.orbit + t.background).toBeCloseTo(t.total, -30);
      if (i > 0) budget += 0.5 * (prev + t.total) * d.cadenceS;
      prev = t.total;
      peak = Math.max(peak, Math.abs(t.total));
      if (crossedAt < 0 && Math.abs(budget) > 2e42) crossedAt = i;
      if (i === 48) budgetAt48 = budget;
    }
    // Accumulated |H| above 2e42 Mx^2 (Tziotziou, Georgoulis & Raouafi 2012), crossed mid-story.
    expect(Math.abs(budget)).toBeGreaterThan(2e42);
    expect(crossedAt).toBeGreaterThan(20);
    expect(crossedAt).toBeLessThan(44);
    // Peak |dH/dt| above 6e36 Mx^2/s (LaBonte, Georgoulis & Rust 2007).
    expect(peak).toBeGreaterThan(6e36);
    // Negative throughout the build-up, and nothing more after 44 h.
    expect(budget).toBeLessThan(0);
    expect(budget).toBe(budgetAt48);
  });
});
