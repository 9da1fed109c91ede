import type { GroupModel } from '../mechanics/group-model.js';

/**
 * A rezero in effect for one group: its model with the new zero (src/mechanics/rezero.ts), used for
 * readings dated after `fromTimeMs` (the logger time of the readings taken as zero). Kept per
 * group in time order, so a late frame dated before a rezero is computed with the zero it was read
 * against, live, after a restart and in a replay alike.
 */
export interface ZeroStep {
  fromTimeMs: number;
  model: GroupModel;
  /** The zeros in the signal's unit (Hz stays Hz), per element; the companion's (NaN without one). */
  elementZeros: readonly number[];
  companionZero: number;
  zeroTempC: number;
  /** The audit record it came from. */
  recordId: string;
}

/** The model for readings dated `timeMs`: the latest step dated before it, else `base`. Allocation-free. */
export function modelAt(base: GroupModel, steps: readonly ZeroStep[], timeMs: number): GroupModel {
  for (let i = steps.length - 1; i >= 0; i--) if (steps[i].fromTimeMs < timeMs) return steps[i].model;
  return base;
}

/** The step in effect for readings dated `timeMs`, or null (the configured zero). */
export function stepAt(steps: readonly ZeroStep[], timeMs: number): ZeroStep | null {
  for (let i = steps.length - 1; i >= 0; i--) if (steps[i].fromTimeMs < timeMs) return steps[i];
  return null;
}

/** Inserts in time order; a step dated like an earlier one goes after it (the later rezero wins). */
export function insertStep(steps: ZeroStep[], step: ZeroStep): void {
  let i = steps.length;
  while (i > 0 && steps[i - 1].fromTimeMs > step.fromTimeMs) i--;
  steps.splice(i, 0, step);
}
