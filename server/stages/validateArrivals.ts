// Stage "validate": each arrival of a region is parsed, checked, hashed and encoded in the intake
// worker (a frame already in memory is checked here); what fails becomes a refusal with its HTTP
// status, never an exception. Operations queued in the region's turn pass through untouched.
//
//   arrivals$.pipe(groupBy((q) => q.arrival.region), mergeMap((g) => g.pipe(
//     validateArrivals({ intake, componentSettings: (r) => store.region(r)?.settings.components ?? {} }),
//     ...)))

import type { OperatorFunction } from 'rxjs';
import { concatMap, from, of } from 'rxjs';
import { InputError } from '../../core/inputError.js';
import type { Intake } from '../frameIntake.js';
import { frameFromInput, intakeFrame, intakeStatus } from '../frameIntake.js';
import type { IntakePool } from '../intakePool.js';
import { IntakeRefusal } from '../intakePool.js';
import type { Queued, Validated } from './arrivalValues.js';

export interface ValidateDeps {
  readonly intake: IntakePool;
  /** The region's component settings: how to read its FITS files. */
  readonly componentSettings: (region: string) => Record<string, unknown>;
}

export function validateArrivals(deps: ValidateDeps): OperatorFunction<Queued, Validated> {
  return concatMap((q) => (q.turn ? of<Validated>(q) : from(validateArrival(q, deps))));
}

async function validateArrival(q: Queued, deps: ValidateDeps): Promise<Validated> {
  const { arrival } = q;
  const p = arrival.payload;
  const source = arrival.source;
  try {
    if (p.kind === 'error') return { ...q, refusal: { status: p.status, error: p.error } };
    const settings = deps.componentSettings(arrival.region);
    let intake: Intake;
    if (p.kind === 'frame') intake = intakeFrame(frameFromInput(p, source), source);
    else if (p.kind === 'file') intake = await deps.intake.take({ kind: 'file', path: p.path, source, settings });
    else intake = await deps.intake.take({ kind: p.kind, bytes: p.bytes, source, settings });
    return { ...q, intake };
  } catch (e) {
    if (e instanceof IntakeRefusal) return { ...q, refusal: { status: e.status, error: e.error } };
    if (e instanceof InputError) return { ...q, refusal: { status: intakeStatus(e), error: e } };
    return { ...q, refusal: { status: 400, error: new InputError(source, '(body)', String((e as Error).message ?? e)) } };
  }
}
