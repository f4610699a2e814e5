// The schema of the settings a config file may hold ({ analysis, budget, rules, components }), and
// the check that reads one: an unknown or misplaced key, a value of the wrong type or out of range
// is an InputError naming the file and the key's path (with the nearest known key, or the place
// the key belongs). The field lists are typed against the core's settings interfaces, so a setting
// added there without its entry here does not compile.

import type { BudgetSettings } from '../core/budget.js';
import type { AnalysisSettings } from '../core/frameAnalysis.js';
import type { ComponentTransform, FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { LAYOUT_NAMES } from '../core/frameAssembly/componentLayouts.js';
import type { FootpointSettings } from '../core/footpoints/analyseFootpoints.js';
import type { FootpointVelocityOptions } from '../core/footpoints/footpointVelocity.js';
import type { PatternRotationOptions } from '../core/footpoints/patternRotation.js';
import type { ReadOptions } from '../core/fits/readImage.js';
import { FRAME_MAPS } from '../core/frame.js';
import { InputError } from '../core/inputError.js';
import { RULES } from '../core/alerts/ruleCatalogue.js';
import type { VelocitySettings } from '../core/velocity/velocitySettings.js';
import type { BraidSettings } from '../core/braid/braidTracker.js';
import type { SphereAnalysisSettings } from '../core/sphere/sphereFrameAnalysis.js';

export type Schema =
  | { readonly kind: 'number'; readonly min?: number; readonly above?: number; readonly max?: number; readonly below?: number; readonly integer?: boolean; readonly help?: string }
  | { readonly kind: 'boolean' }
  | { readonly kind: 'string'; readonly choices?: readonly string[]; readonly regex?: boolean }
  | { readonly kind: 'object'; readonly fields: Readonly<Record<string, Schema>>; readonly required?: readonly string[] }
  /** One of several object shapes, told apart by the key they must have. */
  | { readonly kind: 'either'; readonly by: readonly { readonly when: (v: Record<string, unknown>) => boolean; readonly schema: Schema }[]; readonly describe: string }
  | { readonly kind: 'falseOr'; readonly schema: Schema };

/** Every key of T (optional ones too), each with its schema: the compiler keeps the two lists equal. */
type Fields<T> = { readonly [K in keyof Required<T>]-?: Schema };

const positive: Schema = { kind: 'number', above: 0 };
const nonNegative: Schema = { kind: 'number', min: 0 };
const share: Schema = { kind: 'number', min: 0, max: 1 };
const bool: Schema = { kind: 'boolean' };
const count = (min = 0): Schema => ({ kind: 'number', integer: true, min });

const velocity: Fields<VelocitySettings> = {
  method: { kind: 'string', choices: ['auto', 'lct', 'dave', 'dave4vm'] },
  sigma: { kind: 'number', min: 1, max: 64 },
  threshold: {
    kind: 'either', describe: '{ "unit": "G", "value": 50 } or { "unit": "noise", "value": 3, "noise": 8 }',
    by: [
      { when: (v) => v.unit === 'G', schema: { kind: 'object', fields: { unit: { kind: 'string', choices: ['G'] }, value: nonNegative }, required: ['unit', 'value'] } },
      { when: (v) => v.unit === 'noise', schema: { kind: 'object', fields: { unit: { kind: 'string', choices: ['noise'] }, value: nonNegative, noise: positive }, required: ['unit', 'value'] } },
    ],
  },
  maxIntervalS: positive,
  stride: count(1),
  minCorrelation: { kind: 'number', min: 0, below: 1 },
  minPivot: { kind: 'number', above: 0, below: 1 },
  noiseCorrection: bool,
};

const rotation: Fields<PatternRotationOptions> = {
  marginPixels: count(0), coreShare: { kind: 'number', min: 0, below: 1 }, maxAngle: positive, minAnisotropy: nonNegative,
  maxAngleError: positive, maxMisfit: positive, noiseCorrelation: { kind: 'number', min: 1 }, noiseG: positive,
};

const footpoints: Fields<Omit<FootpointSettings, 'kernelCache'>> = {
  noise: positive, threshold: nonNegative, smoothing: nonNegative, saddleDepth: nonNegative, saddleRatio: share,
  minPixels: count(1), minFlux: nonNegative, split: bool, minOverlap: share, searchPixels: nonNegative,
  contactPixels: nonNegative, patternRotation: bool, rotation: { kind: 'object', fields: rotation },
  topPairs: count(0), windingFootpoints: count(0), exactSplit: bool,
};

const footpointVelocity: Fields<FootpointVelocityOptions> = { keepNonRigid: bool, tailPixels: nonNegative, fieldFloorG: nonNegative };

/** Frames on the sphere (docs/sphere.md): the rotation profile's coefficients are sidereal microrad/s. */
const sphere: Fields<SphereAnalysisSettings> = {
  rotationProfile: { kind: 'object', fields: { a: { kind: 'number' }, b: { kind: 'number' }, c: { kind: 'number' } }, required: ['a', 'b', 'c'] },
  frameRateMicroradPerS: { kind: 'number' }, maxRowPairWork: positive, noiseG: positive,
  wholeSunEngine: { kind: 'string', choices: ['harmonics', 'pairs'] }, harmonicDegree: count(1), patches: bool,
};

export const ANALYSIS_FIELDS: Fields<AnalysisSettings> = {
  noiseG: positive,
  velocity: { kind: 'object', fields: velocity },
  footpoints: { kind: 'falseOr', schema: { kind: 'object', fields: footpoints } },
  motionModel: { kind: 'string', choices: ['footpoints', 'inferred'] },
  footpointVelocity: { kind: 'object', fields: footpointVelocity },
  motionBaselineS: nonNegative,
  sphere: { kind: 'object', fields: sphere },
};

/** The braid of the largest footpoints (docs/braids.md). */
export const BRAID_FIELDS: Fields<BraidSettings> = { strands: count(2), windowS: positive, entryRatio: { kind: 'number', min: 1 } };

export const BUDGET_FIELDS: Fields<BudgetSettings> = { gapFactor: positive, bridgeGaps: bool, minIntervals: positive, cadenceS: positive };

const RULE_FIELDS: Record<string, Schema> = Object.fromEntries(RULES.map((r) => [r.id, {
  kind: 'object',
  fields: Object.fromEntries(Object.entries(r.defaults).map(([k, v]) => [k, typeof v === 'boolean' ? bool : typeof v === 'number' ? { kind: 'number' } : { kind: 'string' }])),
} satisfies Schema]));

const transform: Fields<ComponentTransform> = { negate: bool, mirrorX: bool, mirrorY: bool, unit: { kind: 'string' } };
const perMap = (s: Schema): Schema => ({ kind: 'object', fields: Object.fromEntries(FRAME_MAPS.map((m) => [m, s])) });
const read: Fields<Omit<ReadOptions, 'into'>> = { maxPixels: count(1), verifyChecksums: bool };

export const COMPONENT_FIELDS: Fields<FrameAssemblySettings> = {
  layout: { kind: 'string', choices: LAYOUT_NAMES },
  transforms: perMap({ kind: 'object', fields: transform }),
  timeKeyword: { kind: 'string', choices: ['DATE-AVG', 'DATE-OBS'] },
  files: perMap({
    kind: 'either', describe: '{ "pattern": "REGEX", "flags": "i" } or { "keyword": "KEY", "value": "VALUE" }',
    by: [
      { when: (v) => 'pattern' in v, schema: { kind: 'object', fields: { pattern: { kind: 'string', regex: true }, flags: { kind: 'string' } }, required: ['pattern'] } },
      { when: (v) => 'keyword' in v, schema: { kind: 'object', fields: { keyword: { kind: 'string' }, value: { kind: 'string' } }, required: ['keyword', 'value'] } },
    ],
  }),
  groupToleranceS: nonNegative,
  read: { kind: 'object', fields: read },
};

/** The whole config file. */
export const CONFIG_SCHEMA: Schema = {
  kind: 'object',
  fields: {
    analysis: { kind: 'object', fields: ANALYSIS_FIELDS },
    budget: { kind: 'object', fields: BUDGET_FIELDS },
    rules: { kind: 'object', fields: RULE_FIELDS },
    components: { kind: 'object', fields: COMPONENT_FIELDS },
    braid: { kind: 'object', fields: BRAID_FIELDS },
  },
};

/** Edit distance with transpositions (optimal string alignment), for "did you mean". */
function distance(a: string, b: string): number {
  const d: number[][] = Array.from({ length: a.length + 1 }, (_, i) => Array.from({ length: b.length + 1 }, (_, j) => (i === 0 ? j : j === 0 ? i : 0)));
  for (let i = 1; i <= a.length; i++) {
    for (let j = 1; j <= b.length; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      d[i][j] = Math.min(d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) d[i][j] = Math.min(d[i][j], d[i - 2][j - 2] + 1);
    }
  }
  return d[a.length][b.length];
}

/** The known name nearest to `name` when it is close enough to be a misspelling. */
export function nearest(name: string, known: readonly string[]): string | undefined {
  let best: string | undefined, bestD = Infinity;
  for (const k of known) {
    const dd = distance(name.toLowerCase(), k.toLowerCase());
    if (dd < bestD) { best = k; bestD = dd; }
  }
  return best !== undefined && bestD <= Math.max(1, Math.floor(Math.max(name.length, best.length) / 3)) ? best : undefined;
}

/** Every path of the schema whose last key is `key` (for a key put at the wrong level). */
function pathsOf(schema: Schema, key: string, at = ''): string[] {
  const inner = schema.kind === 'falseOr' ? schema.schema : schema;
  if (inner.kind === 'either') return inner.by.flatMap((b) => pathsOf(b.schema, key, at));
  if (inner.kind !== 'object') return [];
  const out: string[] = [];
  for (const [k, s] of Object.entries(inner.fields)) {
    const p = at ? `${at}.${k}` : k;
    if (k === key) out.push(p);
    out.push(...pathsOf(s, key, p));
  }
  return [...new Set(out)];
}

const typeOf = (v: unknown) => (v === null ? 'null' : Array.isArray(v) ? 'a list' : typeof v === 'object' ? 'an object' : typeof v === 'string' ? `"${v}"` : String(v));

/**
 * Checks `value` against `schema`; throws InputError(source, path, problem). `root` is the whole
 * schema, searched for the right place of a key put at the wrong level.
 */
export function checkSchema(value: unknown, schema: Schema, source: string, path = '', root: Schema = schema): void {
  const where = path || '(top level)';
  switch (schema.kind) {
    case 'number': {
      if (typeof value !== 'number' || !Number.isFinite(value)) throw new InputError(source, where, `must be a number, got ${typeOf(value)}`);
      if (schema.integer && !Number.isInteger(value)) throw new InputError(source, where, `must be a whole number, got ${value}`);
      if (schema.min !== undefined && value < schema.min) throw new InputError(source, where, `must be ${schema.min} or more, got ${value}`);
      if (schema.above !== undefined && !(value > schema.above)) throw new InputError(source, where, `must be more than ${schema.above}, got ${value}`);
      if (schema.max !== undefined && value > schema.max) throw new InputError(source, where, `must be ${schema.max} or less, got ${value}`);
      if (schema.below !== undefined && !(value < schema.below)) throw new InputError(source, where, `must be less than ${schema.below}, got ${value}`);
      return;
    }
    case 'boolean':
      if (typeof value !== 'boolean') throw new InputError(source, where, `must be true or false, got ${typeOf(value)}`);
      return;
    case 'string': {
      if (typeof value !== 'string') throw new InputError(source, where, `must be a string, got ${typeOf(value)}`);
      if (schema.choices && !schema.choices.includes(value)) {
        const near = nearest(value, schema.choices);
        throw new InputError(source, where, `must be one of ${schema.choices.join(', ')}, got "${value}"${near ? ` (did you mean ${near}?)` : ''}`);
      }
      if (schema.regex) {
        try { new RegExp(value); } catch (e) { throw new InputError(source, where, `is not a valid regular expression: ${(e as Error).message}`); }
      }
      return;
    }
    case 'falseOr':
      if (value === false) return;
      checkSchema(value, schema.schema, source, path, root);
      return;
    case 'either': {
      if (value === null || typeof value !== 'object' || Array.isArray(value)) throw new InputError(source, where, `must be ${schema.describe}, got ${typeOf(value)}`);
      const pick = schema.by.find((b) => b.when(value as Record<string, unknown>));
      if (!pick) throw new InputError(source, where, `must be ${schema.describe}`);
      checkSchema(value, pick.schema, source, path, root);
      return;
    }
    case 'object': {
      if (value === null || typeof value !== 'object' || Array.isArray(value)) throw new InputError(source, where, `must be a JSON object, got ${typeOf(value)}`);
      for (const [k, v] of Object.entries(value)) {
        const p = path ? `${path}.${k}` : k;
        const s = schema.fields[k];
        if (!s) {
          const known = Object.keys(schema.fields);
          const near = nearest(k, known);
          const elsewhere = near ? [] : pathsOf(root, k).filter((q) => q !== p);
          const hint = near ? `; did you mean ${path ? `${path}.` : ''}${near}?`
            : elsewhere.length > 0 ? `; it belongs at ${elsewhere.join(' or ')}`
              : `; known here: ${known.join(', ')}`;
          throw new InputError(source, p, `is not a setting${hint}`);
        }
        checkSchema(v, s, source, p, root);
      }
      for (const k of schema.required ?? []) {
        if (!(k in (value as object))) throw new InputError(source, path ? `${path}.${k}` : k, 'is missing');
      }
      return;
    }
  }
}
