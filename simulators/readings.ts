import type { CompiledGroup } from '../src/config/compile.js';
import { companionReading, readingsFromStress } from '../src/mechanics/forward-model.js';
import type { Rng } from './prng.js';
import type { Scenario, SignalUnit } from './scenario.js';

/**
 * From the true state to what a logger sends: the mechanics run backwards for every element
 * (forward-model.ts), then reading noise and the logger's quantisation are added per signal unit.
 */

/** Free strain of the slab concrete seen by a companion gauge, microstrain: thermal plus shrinkage (invented). */
export function concreteFreeStrainMicro(alpha: number, tempC: number, zeroTempC: number, scenarioDays: number): number {
  return alpha * (tempC - zeroTempC) * 1e6 - 60 - 0.5 * scenarioDays;
}

/** Clean raw readings of a group's elements (out, m) and its companion (returned; NaN when none). Mutates out. */
export function cleanGroupReadings(
  group: CompiledGroup, stress: ArrayLike<number>, tempC: number, freeStrainMicro: number, out: Float64Array,
  extraMechanicalMicro?: ArrayLike<number>,
): number {
  readingsFromStress(group.model, stress, tempC, freeStrainMicro, out, extraMechanicalMicro);
  return group.model.companion !== null ? companionReading(group.model, freeStrainMicro, tempC) : Number.NaN;
}

/** Decimal places that print a multiple of `step` exactly (0.0001 -> 4). */
function decimalsOf(step: number): number {
  return Math.max(0, Math.min(12, Math.ceil(-Math.log10(step) - 1e-9)));
}

/**
 * Noisy, quantised reading: v + sigma N(0,1), rounded to the unit's step (printed through
 * toFixed so the JSON carries 12.3456, not 12.345600000000001). Advances rng once when noise is on.
 */
export function noisyReading(v: number, unit: SignalUnit, scn: Scenario, rng: Rng): number {
  if (!scn.noise.enabled) return v;
  const noisy = v + scn.noise.sigma[unit] * rng.gaussian();
  const step = scn.noise.step[unit];
  if (step <= 0) return noisy;
  return Number((Math.round(noisy / step) * step).toFixed(decimalsOf(step)));
}

/** Reading of an open circuit: as far outside the valid range again as the range is wide (1e6 when unbounded). */
export function openCircuitReading(validMin: number, validMax: number): number {
  return Number.isFinite(validMax) && Number.isFinite(validMin) ? validMax + (validMax - validMin) : 1e6;
}
