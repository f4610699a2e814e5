// The life of one alert: quiet -> rising (condition met, hold-off running) -> raised ->
// settled (condition gone for `clearSamples`, past the hysteresis band) -> rising ... .
// A condition met on fewer than `holdOffSamples` consecutive samples falls back without
// raising, so a single noisy frame never fires. Every change is kept with its time and evidence.

import type { RuleParams } from './ruleCatalogue.js';

export type AlertStateName = 'quiet' | 'rising' | 'raised' | 'settled';

export interface Evidence {
  readonly value: number;
  readonly window_from: string;
  readonly window_to: string;
  readonly [more: string]: unknown;
}

export interface AlertChange {
  /** ISO 8601 UTC. */
  readonly time: string;
  readonly from: AlertStateName;
  readonly to: AlertStateName;
  readonly evidence: Evidence;
}

export interface AlertRecord {
  readonly id: string;
  readonly rule: string;
  readonly state: AlertStateName;
  /** ISO time of the last change. */
  readonly since: string;
  readonly threshold: number;
  readonly unit: string;
  readonly source: string;
  readonly evidence: Evidence | null;
  readonly acknowledged: boolean;
  readonly history: readonly AlertChange[];
}

/** What a rule's condition says about one input. */
export interface ConditionReading {
  /** Above the threshold. */
  readonly met: boolean;
  /** Below the hysteresis band (the condition is gone). */
  readonly gone: boolean;
  readonly evidence: Evidence;
}

export interface AlertMachine {
  readonly record: AlertRecord;
  /** Consecutive samples met (while rising) or gone (while raised). */
  readonly run: number;
  /** UTC ms of the first sample of the current run. */
  readonly runFrom: number;
  /** The state rising falls back to when the condition goes before the hold-off. */
  readonly restState: 'quiet' | 'settled';
}

/** History entries kept per alert (the oldest go first). */
export const HISTORY_LIMIT = 500;

export function newAlertMachine(id: string, rule: string, threshold: number, unit: string, source: string, time: number): AlertMachine {
  return {
    record: {
      id, rule, state: 'quiet', since: new Date(time).toISOString(), threshold, unit, source,
      evidence: null, acknowledged: false, history: [],
    },
    run: 0,
    runFrom: time,
    restState: 'quiet',
  };
}

function moveTo(m: AlertMachine, to: AlertStateName, time: number, evidence: Evidence, run: number, runFrom: number): AlertMachine {
  const iso = new Date(time).toISOString();
  const change: AlertChange = { time: iso, from: m.record.state, to, evidence };
  const history = [...m.record.history, change].slice(-HISTORY_LIMIT);
  return {
    record: {
      ...m.record, state: to, since: iso, evidence, history,
      // A new raise needs a new acknowledgement.
      acknowledged: to === 'raised' ? false : m.record.acknowledged,
    },
    run,
    runFrom,
    restState: to === 'quiet' || to === 'settled' ? to : m.restState,
  };
}

/** Advances the machine by one reading at `time` (UTC ms). */
export function stepAlert(m: AlertMachine, reading: ConditionReading, time: number, p: RuleParams): AlertMachine {
  const { met, gone, evidence } = reading;
  const state = m.record.state;
  const held = (run: number, from: number) => run >= p.holdOffSamples && (time - from) / 1000 >= p.holdOffS;
  const withEvidence = (x: AlertMachine, run: number, runFrom: number): AlertMachine =>
    ({ ...x, run, runFrom, record: { ...x.record, evidence } });
  switch (state) {
    case 'quiet':
    case 'settled': {
      if (!met) return withEvidence(m, 0, time);
      const rising = moveTo(m, 'rising', time, evidence, 1, time);
      return held(1, time) ? moveTo(rising, 'raised', time, evidence, 0, time) : rising;
    }
    case 'rising': {
      if (!met) return moveTo(m, m.restState, time, evidence, 0, time);
      const run = m.run + 1;
      return held(run, m.runFrom) ? moveTo(m, 'raised', time, evidence, 0, time) : withEvidence(m, run, m.runFrom);
    }
    case 'raised': {
      if (!gone) return withEvidence(m, 0, time);
      const run = m.run + 1;
      const from = m.run === 0 ? time : m.runFrom;
      return run >= p.clearSamples ? moveTo(m, 'settled', time, evidence, 0, time) : withEvidence(m, run, from);
    }
  }
}

/** Marks the alert acknowledged (by the operator at `time`); kept in the history. */
export function acknowledgeAlert(m: AlertMachine, time: number, by = 'operator'): AlertMachine {
  const iso = new Date(time).toISOString();
  const evidence: Evidence = { value: m.record.evidence?.value ?? 0, window_from: iso, window_to: iso, acknowledged_by: by };
  const change: AlertChange = { time: iso, from: m.record.state, to: m.record.state, evidence };
  return { ...m, record: { ...m.record, acknowledged: true, history: [...m.record.history, change].slice(-HISTORY_LIMIT) } };
}
