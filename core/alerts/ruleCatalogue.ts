// The alert rules and their defaults, as data: each published threshold carries its source
// (the papers named in each rule; the table in README.md and docs/server.md). These are research
// indicators from surveys, not forecasts. Bibliographic details (journal, volume, page) are from
// memory; the threshold values are the papers' figures as quoted when the project started, not
// re-read from the papers here.

export type RuleId =
  | 'budget' | 'budget-emerging' | 'peak-rate' | 'build-up-plateau' | 'sign-reversal'
  | 'data-gap' | 'refusals';

export interface RuleParams {
  readonly enabled: boolean;
  /** The level the watched value must exceed (unit below). */
  readonly threshold: number;
  /** Consecutive samples the condition must hold before the alert is raised. */
  readonly holdOffSamples: number;
  /** ... and the time, s, from the first of them. */
  readonly holdOffS: number;
  /** Fraction below the threshold the value must fall to count as gone (hysteresis). */
  readonly hysteresis: number;
  /** Consecutive samples the condition must be gone before the alert settles. */
  readonly clearSamples: number;
  /** Rule-specific values (documented per rule). */
  readonly [extra: string]: number | boolean;
}

export interface RuleDefinition {
  readonly id: RuleId;
  readonly title: string;
  /** What the watched value is. */
  readonly watches: string;
  readonly unit: string;
  readonly source: string;
  readonly defaults: RuleParams;
}

const common = { holdOffS: 0, hysteresis: 0.1, clearSamples: 3 };

/**
 * The threshold rules on the rate and the budget count a sample only when the value stands above
 * the threshold by `sigmaFactor` times its 1-sigma (default 2): for a Gaussian error a single
 * sample passes by chance with probability 0.023 when the true value sits exactly at the
 * threshold, and the hold-off asks it of 3 successive samples (their errors correlate through shared
 * frames, so the chance is larger than 0.023^3 but far below one sample's).
 */
export const DEFAULT_SIGMA_FACTOR = 2;

export const RULES: readonly RuleDefinition[] = [
  {
    id: 'budget',
    title: 'Accumulated helicity above the eruptive level',
    watches: '|budget_total|',
    unit: 'Mx^2',
    source: 'Tziotziou, Georgoulis & Raouafi 2012 (ApJL 759, L4): eruptive active regions sit above 2e42 Mx^2',
    defaults: { ...common, enabled: true, threshold: 2e42, holdOffSamples: 3, sigmaFactor: DEFAULT_SIGMA_FACTOR },
  },
  {
    id: 'budget-emerging',
    title: 'Accumulated helicity above the level for emerging regions',
    watches: '|budget_total|',
    unit: 'Mx^2',
    source: 'Liokati, Nindos & Liu 2022 (A&A 662, A6): emerging regions that erupted had accumulated 9e41 Mx^2',
    defaults: { ...common, enabled: false, threshold: 9e41, holdOffSamples: 3, sigmaFactor: DEFAULT_SIGMA_FACTOR },
  },
  {
    id: 'peak-rate',
    title: 'Sustained injection rate above the X-flare level',
    watches: '|rate_total|',
    unit: 'Mx^2/s',
    source: 'LaBonte, Georgoulis & Rust 2007 (ApJ 671, 955): peak |dH/dt| above 6e36 Mx^2/s was necessary for X-class flares in 393 regions',
    defaults: { ...common, enabled: true, threshold: 6e36, holdOffSamples: 3, sigmaFactor: DEFAULT_SIGMA_FACTOR },
  },
  {
    id: 'build-up-plateau',
    title: 'Monotonic build-up followed by a plateau',
    watches: 'helicity accumulated in the monotonic phase',
    unit: 'Mx^2',
    source: 'Park, Chae, Jing, Tan & Wang 2010 (ApJ 720, 1102): 3e42 to 4.5e43 Mx^2 accumulated in a monotonic phase, then a plateau, before major flares',
    defaults: {
      ...common, enabled: true, threshold: 3e42, holdOffSamples: 2, clearSamples: 1,
      // Upper end of the published range (reported in the evidence, not a cut-off).
      upper: 4.5e43,
      // Our choices, not published values: the plateau must last 3 h, the build-up 6 h, and the
      // budget counts as flat while it stays within 10% of the phase's accumulation.
      plateauS: 3 * 3600, minPhaseS: 6 * 3600, plateauBand: 0.1,
    },
  },
  {
    id: 'sign-reversal',
    title: 'Sustained reversal of the injection sign',
    watches: 'rate_total against the sign of budget_total',
    unit: 'Mx^2/s',
    source: 'our rule (no published level): the rate runs against the sign of the accumulated budget at more than 2 sigma for 5 samples, once |budget| reaches 1% of the lowest published budget level',
    // budgetFloor: 1 % of 9e41 Mx^2, the lowest published budget level (Liokati et al. 2022, see
    // budget-emerging): below it the budget's sign says nothing about how the region is wound.
    defaults: { ...common, enabled: true, threshold: 0, holdOffSamples: 5, clearSamples: 3, sigmaFactor: 2, budgetFloor: 9e39 },
  },
  {
    id: 'data-gap',
    title: 'Gap in the data',
    watches: 'gaps in the budget (interval longer than gapFactor x the median cadence)',
    unit: 's',
    source: 'our rule: a gap is an interval longer than the budget gapFactor times the median cadence',
    defaults: { ...common, enabled: true, threshold: 0, holdOffSamples: 1, clearSamples: 3 },
  },
  {
    id: 'refusals',
    title: 'Frames refused',
    watches: 'frames refused within the window',
    unit: 'frames',
    source: 'our rule: 3 or more frames refused within an hour',
    defaults: { ...common, enabled: true, threshold: 3, holdOffSamples: 1, clearSamples: 1, hysteresis: 0, windowS: 3600 },
  },
];

export function ruleDefinition(id: string): RuleDefinition | undefined {
  return RULES.find((r) => r.id === id);
}

/** Rule settings of a region: per rule, overrides of the defaults. */
export type RuleOverrides = Partial<Record<RuleId, Partial<RuleParams>>>;

/** The effective parameters of a rule with a region's overrides applied. */
export function ruleParams(def: RuleDefinition, overrides: RuleOverrides = {}): RuleParams {
  return { ...def.defaults, ...(overrides[def.id] ?? {}) } as RuleParams;
}
