// A region's settings, stored with it: analysis settings (passed through to the core unread),
// budget gap handling, lateness of out-of-order frames, alert rule overrides, the webhook, the
// watched folder switch and the component mapping (how FITS files are read, passed through).
import type { BudgetSettings } from '../core/budget.js';
import { ANALYSIS_FIELDS, COMPONENT_FIELDS, checkSchema } from '../replay/settingsSchema.js';
import { InputError } from '../core/inputError.js';
import type { RuleOverrides } from '../core/alerts/ruleCatalogue.js';
import { RULES } from '../core/alerts/ruleCatalogue.js';

export interface RegionSettings {
  readonly analysis: Record<string, unknown>;
  readonly budget: BudgetSettings;
  /** Frames up to this much older (observation time, s) than the newest are put back in order. */
  readonly latenessS: number;
  /**
   * Live frames (HTTP, WebSocket, watched folder) dated more than this many seconds after the
   * monitor's clock are refused: an observation cannot come from the future, and one such frame
   * would make every later frame "too late". Replays are not held to it.
   */
  readonly maxAheadS: number;
  readonly rules: RuleOverrides;
  readonly webhookUrl: string | null;
  /** Watch the region's inbox folder (<data>/inbox/<region>/). */
  readonly watchFolder: boolean;
  /**
   * How the region's FITS files map to components: the FrameAssemblySettings of
   * core/frameAssembly (unit defaults, sign/mirror transforms, time keyword; docs/fits.md).
   */
  readonly components: Record<string, unknown>;
}

export const DEFAULT_SETTINGS: RegionSettings = {
  analysis: {},
  budget: { gapFactor: 3, bridgeGaps: false, minIntervals: 3 },
  // One hour: several frames at the usual 12-minute cadence may arrive out of order.
  latenessS: 3600,
  // Ten minutes: room for a sender's clock that runs ahead, never for a date typed wrong.
  maxAheadS: 600,
  rules: {},
  webhookUrl: null,
  watchFolder: true,
  components: {},
};

const SOURCE = 'settings';

function isObject(v: unknown): v is Record<string, unknown> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

function checkBudget(v: unknown): BudgetSettings {
  if (!isObject(v)) throw new InputError(SOURCE, 'budget', 'must be an object');
  const out: Record<string, unknown> = {};
  for (const [k, x] of Object.entries(v)) {
    if (k === 'bridgeGaps') {
      if (typeof x !== 'boolean') throw new InputError(SOURCE, 'budget.bridgeGaps', 'must be true or false');
    } else if (k === 'gapFactor' || k === 'cadenceS' || k === 'minIntervals') {
      if (typeof x !== 'number' || !(x > 0) || !Number.isFinite(x)) throw new InputError(SOURCE, `budget.${k}`, 'must be a positive number');
    } else throw new InputError(SOURCE, `budget.${k}`, 'is not a budget setting (gapFactor, bridgeGaps, cadenceS, minIntervals)');
    out[k] = x;
  }
  return out as BudgetSettings;
}

function checkRules(v: unknown): RuleOverrides {
  if (!isObject(v)) throw new InputError(SOURCE, 'rules', 'must be an object keyed by rule id');
  for (const [id, params] of Object.entries(v)) {
    const def = RULES.find((r) => r.id === id);
    if (!def) throw new InputError(SOURCE, `rules.${id}`, `is not a rule (${RULES.map((r) => r.id).join(', ')})`);
    if (!isObject(params)) throw new InputError(SOURCE, `rules.${id}`, 'must be an object of parameters');
    for (const [k, x] of Object.entries(params)) {
      if (!(k in def.defaults)) throw new InputError(SOURCE, `rules.${id}.${k}`, `is not a parameter of this rule (${Object.keys(def.defaults).join(', ')})`);
      const want = typeof def.defaults[k];
      if (typeof x !== want || (typeof x === 'number' && !Number.isFinite(x))) throw new InputError(SOURCE, `rules.${id}.${k}`, `must be a ${want}`);
    }
  }
  return v as RuleOverrides;
}

/** Merges a partial settings object (from a request) into `base`; throws InputError naming the field. */
export function mergeSettings(base: RegionSettings, patch: unknown): RegionSettings {
  if (!isObject(patch)) throw new InputError(SOURCE, '(body)', 'must be a JSON object of settings');
  let out: RegionSettings = { ...base };
  for (const [k, v] of Object.entries(patch)) {
    switch (k) {
      case 'analysis':
        if (!isObject(v)) throw new InputError(SOURCE, k, 'must be an object');
        // The same schema as a --config file's section: a misspelled or misplaced key is named.
        checkSchema(v, { kind: 'object', fields: ANALYSIS_FIELDS }, SOURCE, 'analysis');
        out = { ...out, analysis: { ...out.analysis, ...v } };
        break;
      case 'components':
        if (!isObject(v)) throw new InputError(SOURCE, k, 'must be an object');
        checkSchema(v, { kind: 'object', fields: COMPONENT_FIELDS }, SOURCE, 'components');
        out = { ...out, components: { ...out.components, ...v } };
        break;
      case 'budget':
        out = { ...out, budget: { ...out.budget, ...checkBudget(v) } };
        break;
      case 'latenessS':
      case 'maxAheadS':
        if (typeof v !== 'number' || !(v >= 0) || !Number.isFinite(v)) throw new InputError(SOURCE, k, 'must be a number of seconds, 0 or more');
        out = { ...out, [k]: v };
        break;
      case 'rules': {
        const r = checkRules(v);
        const merged: Record<string, unknown> = { ...out.rules };
        for (const [id, params] of Object.entries(r)) merged[id] = { ...(merged[id] as object | undefined), ...params };
        out = { ...out, rules: merged as RuleOverrides };
        break;
      }
      case 'webhookUrl':
        if (v !== null) {
          let ok = false;
          try { ok = typeof v === 'string' && /^https?:$/.test(new URL(v).protocol); } catch { ok = false; }
          if (!ok) throw new InputError(SOURCE, k, 'must be an http(s) URL or null');
        }
        out = { ...out, webhookUrl: v as string | null };
        break;
      case 'watchFolder':
        if (typeof v !== 'boolean') throw new InputError(SOURCE, k, 'must be true or false');
        out = { ...out, watchFolder: v };
        break;
      default:
        throw new InputError(SOURCE, k, 'is not a region setting (analysis, budget, latenessS, maxAheadS, rules, webhookUrl, watchFolder, components)');
    }
  }
  return out;
}
