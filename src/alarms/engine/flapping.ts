import type { KeyState } from './state.js';

/** Flapping settings in engine units. */
export interface FlappingRule {
  maxCycles: number;
  windowMs: number;
}

function prune(ks: KeyState, tMs: number, windowMs: number): void {
  let drop = 0;
  while (drop < ks.clearsMs.length && ks.clearsMs[drop] < tMs - windowMs) drop++;
  if (drop > 0) ks.clearsMs.splice(0, drop);
}

/** Remember one raise/clear cycle ending at tMs. Mutates `ks`. */
export function recordClear(ks: KeyState, tMs: number, rule: FlappingRule): void {
  prune(ks, tMs, rule.windowMs);
  ks.clearsMs.push(tMs);
}

/**
 * A raise at tMs is flapping when max_cycles complete raise/clear cycles already happened inside
 * the window: this raise would start one more. Mutates `ks` (forgets cycles outside the window).
 */
export function raiseIsFlapping(ks: KeyState, tMs: number, rule: FlappingRule): boolean {
  prune(ks, tMs, rule.windowMs);
  return ks.clearsMs.length >= rule.maxCycles;
}

/**
 * While flapping, the alarm stays up until the condition has been gone for a whole window.
 * Returns true when it may clear now. Mutates `ks.quietSinceMs`.
 */
export function flappingMayClear(ks: KeyState, conditionPresent: boolean, tMs: number, rule: FlappingRule): boolean {
  if (conditionPresent) {
    ks.quietSinceMs = null;
    return false;
  }
  ks.quietSinceMs ??= tMs;
  return tMs - ks.quietSinceMs >= rule.windowMs;
}
