// Follows the budget for the build-up-plateau rule: a monotonic phase (the budget moves one way
// without falling back by more than `band` of what it gained) and the plateau after its peak
// (no new progress beyond `band` for a while). Progress smaller than the band does not move the
// peak, so noise on a flat budget does not restart the plateau clock.

export interface BuildUpState {
  readonly startTime: number;
  readonly startBudget: number;
  /** +1 / -1 once the budget has moved, 0 before. */
  readonly sign: number;
  readonly peakTime: number;
  readonly peakBudget: number;
}

export interface BuildUpView {
  /** Helicity gained in the monotonic phase (start to peak), Mx^2, >= 0. */
  readonly accumulated: number;
  readonly phaseFrom: number;
  readonly phaseTo: number;
  /** Time since the peak, s (the plateau's length so far). */
  readonly plateauS: number;
  readonly sign: number;
}

export function trackBuildUp(state: BuildUpState | undefined, time: number, budget: number, band: number): BuildUpState {
  if (!state) return { startTime: time, startBudget: budget, sign: 0, peakTime: time, peakBudget: budget };
  let { startTime, startBudget, sign, peakTime, peakBudget } = state;
  if (sign === 0) {
    if (budget === startBudget) return state;
    sign = budget > startBudget ? 1 : -1;
    return { startTime, startBudget, sign, peakTime: time, peakBudget: budget };
  }
  const gained = sign * (peakBudget - startBudget);
  const tolerance = band * gained;
  const progress = sign * (budget - peakBudget);
  if (progress > tolerance) {
    peakTime = time;
    peakBudget = budget;
  } else if (-progress > tolerance) {
    // Fell back by more than the band: the phase is over; a new one starts from the peak.
    return { startTime: peakTime, startBudget: peakBudget, sign: -sign, peakTime: time, peakBudget: budget };
  }
  return { startTime, startBudget, sign, peakTime, peakBudget };
}

export function viewBuildUp(state: BuildUpState, time: number): BuildUpView {
  return {
    accumulated: state.sign * (state.peakBudget - state.startBudget),
    phaseFrom: state.startTime,
    phaseTo: state.peakTime,
    plateauS: (time - state.peakTime) / 1000,
    sign: state.sign,
  };
}
