// A config file for `process`, `replay` and `rate`: { "analysis": ..., "budget": ..., "rules": ...,
// "components": ..., "braid": ... }, each section optional, checked against replay/settingsSchema.ts: an unknown
// or misplaced key, a value of the wrong type or out of range is an error naming the file and the
// key's path. Nothing is guessed: a file that is not an object of these sections is refused.

import type { RulesSettings } from '../core/alerts/evaluateRules.js';
import type { BudgetSettings } from '../core/budget.js';
import type { AnalysisSettings } from '../core/frameAnalysis.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import type { BraidSettings } from '../core/braid/braidTracker.js';
import { readJsonFile } from './fileProblem.js';
import { CONFIG_SCHEMA, checkSchema } from './settingsSchema.js';

/** What a --config file holds, every section present (empty when the file leaves it out). */
export interface BatchConfig {
  readonly analysis: AnalysisSettings;
  readonly budget: BudgetSettings;
  readonly rules: NonNullable<RulesSettings['rules']>;
  /** How FITS files map to components (core/frameAssembly; a layout, file rules, corrections). */
  readonly components: FrameAssemblySettings;
  /** The braid of the largest footpoints (docs/braids.md); present only when the file gives it. */
  readonly braid?: BraidSettings;
}

export const EMPTY_CONFIG: BatchConfig = { analysis: {}, budget: {}, rules: {}, components: {} };

/** Checks a parsed config object; `source` names it in errors. */
export function checkBatchConfig(json: unknown, source: string): BatchConfig {
  checkSchema(json, CONFIG_SCHEMA, source);
  const o = json as Partial<BatchConfig>;
  return { analysis: o.analysis ?? {}, budget: o.budget ?? {}, rules: o.rules ?? {}, components: o.components ?? {}, ...(o.braid && { braid: o.braid }) };
}

/** Reads and checks a --config file. Throws InputError naming the file (and the key at fault). */
export async function readBatchConfig(path?: string): Promise<BatchConfig> {
  if (path === undefined) return EMPTY_CONFIG;
  return checkBatchConfig(await readJsonFile(path, '(config file)'), path);
}
