import type { RateRule } from '../schema.js';
import { hysteresisLevel } from './hysteresis.js';
import { newSampleWindow, pushSample, slopePerS } from './sample-window.js';
import type { KeyState } from './state.js';

/** Samples kept per rate window: spacing window/200 bounds memory. */
const SAMPLES_PER_WINDOW = 200;

/**
 * Feed one value; returns the least-squares slope over the rule's window (units per second), or
 * null until the samples span half the window. Mutates `ks.rate`.
 */
export function rateStep(rule: RateRule, ks: KeyState, tMs: number, value: number): number | null {
  const windowMs = rule.window_s * 1000;
  ks.rate ??= newSampleWindow();
  pushSample(ks.rate, tMs, value, windowMs, windowMs / SAMPLES_PER_WINDOW);
  return slopePerS(ks.rate, windowMs / 2);
}

/** Raw level of a slope against the rule's rates, with hysteresis. Pure. */
export function rateLevel(rule: RateRule, slopePerSecond: number, confirmed: number): number {
  const sign = rule.direction === 'rising' ? 1 : -1;
  return hysteresisLevel(
    sign * slopePerSecond,
    rule.thresholds.map((t) => t.rate_per_s),
    rule.clear_margin_per_s,
    confirmed,
  );
}

/** The signed rate limit of level i (1-based), units per second (negative for falling). */
export function rateLimit(rule: RateRule, level: number): number {
  return (rule.direction === 'rising' ? 1 : -1) * rule.thresholds[level - 1].rate_per_s;
}
