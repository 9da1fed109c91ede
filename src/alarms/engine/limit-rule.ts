import type { LimitRule } from '../schema.js';
import { hysteresisLevel } from './hysteresis.js';

/** Compiled limit rule: thresholds turned into an ascending scale (negated for "below"). */
export interface CompiledLimit {
  sign: 1 | -1;
  ascending: number[];
  levelNames: string[];
  margin: number;
}

export function compileLimit(rule: LimitRule): CompiledLimit {
  const sign = rule.direction === 'above' ? 1 : -1;
  return {
    sign,
    ascending: rule.thresholds.map((t) => sign * t.value),
    levelNames: rule.thresholds.map((t) => t.level),
    margin: rule.clear_margin,
  };
}

/** Raw level (0 = within limits) of a value given the confirmed level. Pure. */
export function limitLevel(c: CompiledLimit, value: number, confirmed: number): number {
  return hysteresisLevel(c.sign * value, c.ascending, c.margin, confirmed);
}

/** The threshold value of level i (1-based), in the quantity's unit. */
export function limitValue(c: CompiledLimit, level: number): number {
  return c.sign * c.ascending[level - 1];
}
