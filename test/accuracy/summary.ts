// Summaries of the accuracy runs: for one cell (scene, data, cadence, noise, method) the errors of
// total, spin, orbit (and emergence, shear) against the truth at the same mid-times, from the
// third frame on; with several noise realisations, the reported 1-sigma against the measured
// scatter. The printed table and the targets are made from these.
//
// Errors. Each component's error is the signed mean over realisations and samples of
// (measured - truth) / |truth|. Where the truth of a component is near zero (|truth| < 5 % of the
// scene's scale, see Truth.scale: a balanced bipole turning rigidly, a static scene, the spin of
// round spots that only move) a relative error means nothing, so the error is given over the
// scale instead: (measured - truth) / scale, marked `relativeTo: 'scale'` (for the rigid bipole
// the scale is its orbit term, so this is |total| / |true orbit|).
//
// Uncertainty. For every `sigmaX` field of the sample (sigmaTotal, sigmaSpin, ...; read
// generically) the reported 1-sigma is the median over realisations, the measured scatter the
// standard deviation over realisations of X; both are pooled over the compared samples as root
// mean squares. Samples of adjacent pairs share a frame, so only every other one counts as
// independent in the degrees of freedom, dof = (R - 1) * ceil(J / 2).

import type { Scene } from './scenes.js';
import type { Method, Mode, RunRecord, Sequence } from './runScene.js';

export const COMPONENTS = ['total', 'spin', 'orbit', 'emergence', 'shear'] as const;
export type Component = (typeof COMPONENTS)[number];

/** The first sample compared with the truth: the one made when the third frame arrived. */
export const FIRST_COMPARED_PAIR = 2;

export interface ComponentSummary {
  /** Mean truth and mean measured value over the compared samples, Mx^2/s. */
  readonly truth: number;
  readonly measured: number | null;
  /** Signed mean error over |truth| or over the scale; null without a measured value. */
  readonly error: number | null;
  /** Mean absolute error on the same footing. */
  readonly absError: number | null;
  readonly relativeTo: 'truth' | 'scale';
  /** Samples where the sample gave null for this component. */
  readonly nulls: number;
}

export interface SigmaCheck {
  /** The sample field of the value and of its 1-sigma. */
  readonly component: string;
  readonly field: string;
  /** Median reported 1-sigma and measured standard deviation, Mx^2/s (RMS over samples). */
  readonly sigma: number;
  readonly scatter: number;
  /** sigma / scatter. */
  readonly ratio: number;
  readonly dof: number;
  /** Both below 1e-3 of the scene scale: nothing to compare (e.g. the spin of round spots). */
  readonly negligible: boolean;
}

export interface CellSummary {
  readonly scene: string;
  readonly mode: Mode;
  readonly cadenceS: number;
  readonly noiseG: number;
  readonly method: Method;
  /** The velocity methods the samples report (e.g. 'dave' for 'auto'). */
  readonly resolved: string[];
  readonly realisations: number;
  /** Samples compared (all realisations). */
  readonly compared: number;
  readonly components: Partial<Record<Component, ComponentSummary>>;
  /**
   * The turning objects' spin as the footpoint table gives it (the footpoint nearest each
   * turning object, same polarity, within 10 px), against their true spin.
   */
  readonly turning?: { readonly truth: number; readonly measured: number | null; readonly error: number | null; readonly unmatched: number };
  readonly sigma: SigmaCheck[];
  /** Flags seen on compared samples, with counts. */
  readonly flags: Record<string, number>;
  readonly errors: string[];
  readonly cpuMs: number;
  /** Scene scale (mean over compared samples), Mx^2/s. */
  readonly scale: number;
}

function mean(v: readonly number[]): number {
  return v.reduce((s, x) => s + x, 0) / v.length;
}

export function median(v: readonly number[]): number {
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/** Sample standard deviation (n - 1). */
export function std(v: readonly number[]): number {
  const m = mean(v);
  return Math.sqrt(v.reduce((s, x) => s + (x - m) ** 2, 0) / (v.length - 1));
}

/** The truth value of a component (undefined where the scene has none). */
function truthOf(seq: Sequence, pair: number, c: Component): number | undefined {
  const t = seq.truths[pair - 1];
  return c === 'emergence' ? t.emergence : c === 'shear' ? t.shear : t[c];
}

/** Spin of the footpoints matched to the scene's turning objects in one sample, or null where one is missing. */
function turningSpin(scene: Scene, sample: RunRecord['samples'][number]): { value: number | null; unmatched: number } {
  if (!scene.turning || !sample.footpoints) return { value: null, unmatched: scene.turning?.length ?? 0 };
  const { dx, dy } = scene.grid;
  let sum = 0, unmatched = 0, anyNull = false;
  for (const name of scene.turning) {
    const o = scene.objects.find((x) => x.name === name)!;
    const m = o.motion(sample.t, dx);
    let best: (typeof sample.footpoints)[number] | undefined, bestD = 10;
    for (const row of sample.footpoints) {
      if (row.polarity !== o.polarity || typeof row.x !== 'number' || typeof row.y !== 'number') continue;
      const d = Math.hypot(row.x / dx - m.x, row.y / dy - m.y);
      if (d < bestD) { bestD = d; best = row; }
    }
    if (!best) { unmatched++; continue; }
    if (typeof best.spinExact === 'number') sum += best.spinExact;
    else anyNull = true;
  }
  return { value: unmatched > 0 || anyNull ? null : sum, unmatched };
}

export function summariseCell(seq: Sequence, runs: readonly RunRecord[]): CellSummary {
  const scene = seq.scene;
  const first = runs[0];
  const compared = runs.map((r) => r.samples.filter((s) => s.pair >= FIRST_COMPARED_PAIR));
  const pairs = [...new Set(compared.flat().map((s) => s.pair))].sort((a, b) => a - b);
  const all = compared.flat();
  const scale = pairs.length ? mean(pairs.map((p) => seq.truths[p - 1].scale)) : NaN;
  const components: Partial<Record<Component, ComponentSummary>> = {};
  for (const c of COMPONENTS) {
    if (truthOf(seq, 1, c) === undefined) continue;
    if (c !== 'total' && c !== 'spin' && c !== 'orbit' && first.mode !== 'vector') continue;
    const truthMean = pairs.length ? mean(pairs.map((p) => truthOf(seq, p, c)!)) : NaN;
    const relativeTo = Math.abs(truthMean) >= 0.05 * scale ? 'truth' : 'scale';
    const errs: number[] = [], vals: number[] = [];
    let nulls = 0;
    for (const s of all) {
      const v = s.values[c];
      if (typeof v !== 'number') { nulls++; continue; }
      const t = truthOf(seq, s.pair, c)!;
      vals.push(v);
      errs.push((v - t) / (relativeTo === 'truth' ? Math.abs(t) : seq.truths[s.pair - 1].scale));
    }
    components[c] = {
      truth: truthMean, measured: vals.length ? mean(vals) : null,
      error: errs.length ? mean(errs) : null, absError: errs.length ? mean(errs.map(Math.abs)) : null,
      relativeTo, nulls,
    };
  }

  let turning: CellSummary['turning'];
  if (scene.turning) {
    const truth = pairs.length ? mean(pairs.map((p) => scene.turning!.reduce((s, n) => s + seq.truths[p - 1].spins[n], 0))) : NaN;
    const errs: number[] = [], vals: number[] = [];
    let unmatched = 0;
    for (const s of all) {
      const m = turningSpin(scene, s);
      unmatched += m.unmatched;
      if (m.value === null) continue;
      const t = scene.turning.reduce((sum, n) => sum + seq.truths[s.pair - 1].spins[n], 0);
      vals.push(m.value);
      errs.push((m.value - t) / Math.abs(t));
    }
    turning = { truth, measured: vals.length ? mean(vals) : null, error: errs.length ? mean(errs) : null, unmatched };
  }

  const sigma: SigmaCheck[] = [];
  if (runs.length >= 2) {
    const fields = new Set<string>();
    for (const s of all) for (const k of Object.keys(s.values)) if (/^sigma[A-Z]/.test(k)) fields.add(k);
    const rank = (f: string) => { const i = COMPONENTS.indexOf((f[5].toLowerCase() + f.slice(6)) as Component); return i < 0 ? COMPONENTS.length : i; };
    for (const field of [...fields].sort((a, b) => rank(a) - rank(b) || a.localeCompare(b))) {
      const component = field[5].toLowerCase() + field.slice(6);
      let sig2 = 0, sc2 = 0, used = 0;
      for (const p of pairs) {
        const rows = compared.map((r) => r.find((s) => s.pair === p)).filter((s) => s !== undefined);
        const v = rows.map((s) => s.values[component]).filter((x): x is number => typeof x === 'number');
        const e = rows.map((s) => s.values[field]).filter((x): x is number => typeof x === 'number');
        if (v.length < 2 || e.length === 0) continue;
        sig2 += median(e) ** 2;
        sc2 += std(v) ** 2;
        used++;
      }
      if (used === 0) continue;
      const s = Math.sqrt(sig2 / used), sc = Math.sqrt(sc2 / used);
      sigma.push({
        component, field, sigma: s, scatter: sc, ratio: s / sc, dof: (runs.length - 1) * Math.ceil(used / 2),
        negligible: Math.max(s, sc) < 1e-3 * scale,
      });
    }
  }

  const flags: Record<string, number> = {};
  for (const s of all) for (const f of s.flags) flags[f] = (flags[f] ?? 0) + 1;
  return {
    scene: scene.name, mode: first.mode, cadenceS: first.cadenceS, noiseG: first.noiseG, method: first.method,
    resolved: [...new Set(all.map((s) => s.velocityMethod))],
    realisations: runs.length, compared: all.length, components, ...(turning && { turning }), sigma, flags,
    errors: runs.flatMap((r) => r.errors.map((e) => `realisation ${r.realisation}: ${e}`)),
    cpuMs: runs.reduce((s, r) => s + r.cpuMs, 0), scale,
  };
}

/**
 * Two-sided 95 % range of s / sigma for a standard deviation s from `dof` degrees of freedom of
 * Gaussian data: sqrt(chi2_p(dof) / dof), with the chi-square quantiles by the Wilson & Hilferty
 * (1931) cube-root approximation.
 */
export function scatterRange(dof: number): { lo: number; hi: number } {
  const q = (z: number) => dof * (1 - 2 / (9 * dof) + z * Math.sqrt(2 / (9 * dof))) ** 3;
  return { lo: Math.sqrt(Math.max(0, q(-1.959964)) / dof), hi: Math.sqrt(q(1.959964) / dof) };
}

// ---- the printed table ----

function sci(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '–';
  if (v === 0) return '0';
  const e = Math.floor(Math.log10(Math.abs(v)));
  return `${(v / 10 ** e).toFixed(1)}e${e}`;
}

function pct(c: ComponentSummary | undefined): string {
  if (!c) return '';
  if (c.error === null) return c.nulls ? 'null' : '–';
  const s = `${c.error >= 0 ? '+' : ''}${(100 * c.error).toFixed(1)}%`;
  return c.relativeTo === 'scale' ? `S${s}` : s;
}

export function tableHeader(): string {
  return [
    '| scene | data | cad s | noise G | method | n | total | err total | spin | err spin | orbit | err orbit | turning spin err | err E | err S | sigma/scatter | flags |',
    '| --- | --- | ---: | ---: | --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | --- | --- |',
  ].join('\n');
}

export function tableRow(c: CellSummary): string {
  const k = c.components;
  const method = c.resolved.length && !(c.resolved.length === 1 && c.resolved[0] === c.method) ? `${c.method}→${c.resolved.join('/')}` : c.method;
  const ratio = (s: SigmaCheck) => s.negligible ? '~0' : !Number.isFinite(s.ratio) ? (s.sigma > 0 ? '∞' : '–') : s.ratio.toFixed(s.ratio < 0.1 ? 3 : 2);
  const ratios = c.sigma.map((s) => `${s.component === 'total' ? '' : `${s.component} `}${ratio(s)}`).join(', ');
  const flags = Object.keys(c.flags).filter((f) => f !== 'masked-pixels').join(' ');
  const turning = c.turning ? (c.turning.error === null ? 'null' : `${c.turning.error >= 0 ? '+' : ''}${(100 * c.turning.error).toFixed(1)}%`) : '';
  const n = c.errors.length ? `${c.compared} (${c.errors.length} refused)` : `${c.compared}`;
  return `| ${c.scene} | ${c.mode === 'vector' ? 'vec' : 'B'} | ${c.cadenceS} | ${c.noiseG} | ${method} | ${n} | ${sci(k.total?.truth)} | ${pct(k.total)} | ${sci(k.spin?.truth)} | ${pct(k.spin)} | ${sci(k.orbit?.truth)} | ${pct(k.orbit)} | ${turning} | ${pct(k.emergence)} | ${pct(k.shear)} | ${ratios} | ${flags} |`;
}

export { sci };
