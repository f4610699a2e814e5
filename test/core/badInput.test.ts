// Bad input gets a clear error naming the source, the field and the problem; partial NaN maps
// compute over the valid pixels and report the masked fraction.
import { describe, expect, it } from 'vitest';
import { createFluxKernel } from '../../core/fluxKernel.js';
import { parseFrameJson } from '../../core/frameJson.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { helicityFlux } from '../../core/helicityFlux.js';
import { InputError } from '../../core/inputError.js';
import { measureRate } from '../../core/measureRate.js';

const base = { time: '2026-03-14T06:00:00Z', nx: 3, ny: 2, dx: 0.5, dy: 0.5, bn: [1, 2, 3, 4, 5, 6], vx: [0, 0, 0, 0, 0, 0], vy: [1, 0, 0, 0, 0, 1] };
const parse = (o: unknown) => parseFrameJson(JSON.stringify(o), 'f.json');

function refusal(o: unknown, field: string, words: RegExp): void {
  try {
    parse(o);
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    const err = e as InputError;
    expect(err.source).toBe('f.json');
    expect(err.field).toBe(field);
    expect(err.message).toMatch(words);
    return;
  }
  throw new Error('expected a refusal');
}

describe('bad frames are refused with the field and the problem', () => {
  it('mismatched array lengths', () => refusal({ ...base, vx: [0, 0] }, 'vx', /2 values but nx\*ny = 3\*2 = 6/));
  it('nx*ny mismatch with bn', () => refusal({ ...base, nx: 4 }, 'bn', /6 values but nx\*ny = 4\*2 = 8/));
  it('non-positive pixel size', () => refusal({ ...base, dx: 0 }, 'dx', /positive and finite/));
  it('non-finite pixel size', () => refusal({ ...base, dy: 'wide' }, 'dy', /must be a number/));
  it('empty grid', () => refusal({ ...base, nx: 0, bn: [] }, 'nx', /positive integer/));
  it('all-NaN field', () => refusal({ ...base, bn: [null, null, null, null, null, null] }, 'bn', /no valid value/));
  it('JSON that is not a frame', () => refusal([1, 2, 3], '(top level)', /not a frame/));
  it('a missing key', () => refusal({ nx: 1 }, 'time', /missing/));
  it('text that is not JSON', () => {
    expect(() => parseFrameJson('{"time": ', 'f.json')).toThrow(/f\.json: \(json\): is not valid JSON/);
  });
  it('a time without a zone', () => refusal({ ...base, time: '2026-03-14 06:00' }, 'time', /ISO 8601/));
  it('vx without vy', () => { const { vy: _vy, ...o } = base; refusal(o, 'vy', /together/); });
});

describe('partially NaN maps', () => {
  it('compute over the valid pixels, report the masked fraction, and keep NaN out of the totals', () => {
    const n = 16 * 16;
    const bn = Array.from({ length: n }, (_, i) => Math.sin(i * 0.37) * 800);
    const vx = Array.from({ length: n }, (_, i) => Math.cos(i * 0.11));
    const vy = Array.from({ length: n }, (_, i) => Math.sin(i * 0.23));
    const holes = [3, 17, 40, 41, 42, 200];
    const withNaN = bn.map((v, i) => (holes.includes(i) ? null : v));
    const f = parse({ ...base, nx: 16, ny: 16, bn: withNaN, vx, vy });
    const r = helicityFlux(createFluxKernel(f), fluxTransport(f));
    expect(r.maskedFraction).toBeCloseTo(holes.length / n, 12);
    expect(Number.isFinite(r.total)).toBe(true);
    expect(Number.isNaN(r.gTheta[40])).toBe(true);
    // Equal to the same frame with the holes set to zero field (no data contributes nothing).
    const z = parse({ ...base, nx: 16, ny: 16, bn: bn.map((v, i) => (holes.includes(i) ? 0 : v)), vx, vy });
    const rz = helicityFlux(createFluxKernel(z), fluxTransport(z));
    expect(r.total).toBeCloseTo(rz.total, 0);
    expect(Math.abs(r.total - rz.total) / Math.abs(rz.total)).toBeLessThan(1e-12);
    const s = measureRate({ frame: f, noiseG: 5 });
    expect(s.sample.flags).toContain('masked-pixels');
    expect(Number.isFinite(s.sample.sigmaTotal)).toBe(true);
  });

  it('a NaN in the velocity masks that pixel too', () => {
    const f = parse({ ...base, vx: [0, null, 0, 0, 0, 0] });
    const t = fluxTransport(f);
    expect(t.valid[1]).toBe(0);
    expect(t.maskedFraction).toBeCloseTo(1 / 6, 12);
  });
});
