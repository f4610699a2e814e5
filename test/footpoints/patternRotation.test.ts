import { describe, expect, it } from 'vitest';
import { analyseFootpoints } from '../../core/footpoints/analyseFootpoints.js';
import { sceneFrame } from './scene.js';

// The truth is the rotation we impose on a synthetic elliptical footpoint of our own (no outside
// source): frame k holds the spot at angle theta0 + k * step, drifting by 0.2 Mm per frame.
const grid = { nx: 72, ny: 64, dx: 0.4, dy: 0.4 };
const DT = 60_000;
const deg = Math.PI / 180;

function rotatingSequence(stepDeg: number, a: number, b: number, frames = 3, noise = 1) {
  let state;
  const out = [];
  for (let k = 0; k < frames; k++) {
    const spot = { x: 12 + 0.2 * k, y: 12.5 - 0.1 * k, a, b, angle: 0.3 + k * stepDeg * deg, peak: 2000 };
    const r = analyseFootpoints(state, sceneFrame(grid, k * DT, [spot], noise, 7 + 13 * k));
    out.push(r);
    state = r.state;
  }
  return out;
}

describe('rotation rate from the pattern alone', () => {
  for (const step of [0.5, 1, 2, 5, 10]) {
    it(`elliptical footpoint (axis ratio 2) turned by ${step} degrees per frame: omega within 3 %`, () => {
      const seq = rotatingSequence(step, 2.4, 1.2);
      const truth = (step * deg) / 60; // rad/s
      for (const r of seq.slice(1)) {
        expect(r.footpoints).toHaveLength(1);
        const fp = r.footpoints[0];
        expect(fp.patternNote).toBeNull();
        expect(fp.omegaSource).toBe('pattern');
        expect(fp.omegaVelocity).toBeNull();
        expect(Math.abs(fp.omega! / truth - 1)).toBeLessThan(0.03);
        // The reported error is honest: the miss is within 3 of its sigmas (or below 0.01 degree).
        expect(Math.abs(fp.omega! - truth)).toBeLessThan(Math.max(3 * fp.omegaPatternError!, (0.01 * deg) / 60));
      }
    });
  }

  it('turning clockwise gives a negative rate', () => {
    const r = rotatingSequence(-3, 2.4, 1.2, 2)[1];
    expect(r.footpoints[0].omega! / ((-3 * deg) / 60)).toBeCloseTo(1, 1);
  });

  it('an axisymmetric footpoint reports that its rotation cannot be seen, not a number', () => {
    for (const noise of [0, 5]) {
      const r = rotatingSequence(5, 1.6, 1.6, 2, noise)[1];
      const fp = r.footpoints[0];
      expect(fp.status).toBe('continued');
      expect(fp.patternNote).toBe('axisymmetric');
      expect(fp.omegaPattern).toBeNull();
      expect(fp.omega).toBeNull();
      expect(fp.omegaSource).toBeNull();
      expect(fp.spinPoint).toBeNull();
      expect(r.point.spinUnknown).toEqual([fp.id]);
      expect(r.point.spin).toBe(0);
      expect(r.flags).toContain('spin-unknown');
      expect(fp.anisotropy!).toBeLessThan(0.05);
    }
  });

  it('a barely elliptical footpoint (axis ratio 1.25) is still measured, within 3 % at 5 degrees per frame', () => {
    const r = rotatingSequence(5, 2.0, 1.6, 2)[1];
    const fp = r.footpoints[0];
    expect(fp.anisotropy!).toBeGreaterThan(0.1);
    expect(Math.abs(fp.omega! / ((5 * deg) / 60) - 1)).toBeLessThan(0.03);
  });
});
