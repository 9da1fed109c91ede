import { z } from 'zod';
import { RESULT_QUANTITIES } from '../model/result.js';

/** Where a rule applies: the whole structure, one zone, or a list of group ids. */
export const RuleScopeSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('structure') }),
  z.strictObject({ kind: z.literal('zone'), zone: z.string().min(1) }),
  z.strictObject({ kind: z.literal('groups'), group_ids: z.array(z.string().min(1)).min(1) }),
]);

const ResultQuantitySchema = z.enum(RESULT_QUANTITIES);
const LevelName = z.string().min(1);
const NonNegative = z.number().finite().nonnegative();

/** One threshold of a limit rule: the value (in the quantity's unit) and the level it raises. */
export const LimitThresholdSchema = z.strictObject({ level: LevelName, value: z.number().finite() });

/**
 * Limit rule: the quantity above (or below) ordered thresholds. Clears only once the value is back
 * past threshold - clear_margin (above) or threshold + clear_margin (below).
 */
export const LimitRuleSchema = z.strictObject({
  id: z.string().min(1),
  kind: z.literal('limit'),
  quantity: ResultQuantitySchema,
  scope: RuleScopeSchema,
  direction: z.enum(['above', 'below']),
  thresholds: z.array(LimitThresholdSchema).min(1),
  /** Hysteresis, in the quantity's unit. */
  clear_margin: NonNegative.default(0),
  /** The condition must hold this long (seconds of result time) before the level is confirmed. */
  on_delay_s: NonNegative.default(0),
  /** The condition must be gone this long before a level is lowered or cleared. */
  off_delay_s: NonNegative.default(0),
  /** What the crew should do, shown in every message. */
  action: z.string().min(1),
});

/** One threshold of a rate rule: the rate in quantity units per second and the level it raises. */
export const RateThresholdSchema = z.strictObject({ level: LevelName, rate_per_s: z.number().finite().positive() });

/**
 * Rate-of-change rule: least-squares slope of the quantity over the last window_s rising (or
 * falling) faster than the thresholds.
 */
export const RateRuleSchema = z.strictObject({
  id: z.string().min(1),
  kind: z.literal('rate'),
  quantity: ResultQuantitySchema,
  scope: RuleScopeSchema,
  direction: z.enum(['rising', 'falling']),
  window_s: z.number().finite().positive(),
  thresholds: z.array(RateThresholdSchema).min(1),
  /** Hysteresis in units per second. */
  clear_margin_per_s: NonNegative.default(0),
  on_delay_s: NonNegative.default(0),
  off_delay_s: NonNegative.default(0),
  action: z.string().min(1),
});

/** Which fatigue details a fatigue rule watches: all of them, or those named (the `fatigue` section's ids). */
export const FatigueScopeSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('structure') }),
  z.strictObject({ kind: z.literal('details'), detail_ids: z.array(z.string().min(1)).min(1) }),
]);

const fatigueCommon = {
  id: z.string().min(1),
  scope: FatigueScopeSchema.default({ kind: 'structure' }),
  /** Delays in logger time; the figures are judged once per fatigue snapshot (`fatigue.write_interval_s`). */
  on_delay_s: NonNegative.default(0),
  off_delay_s: NonNegative.default(0),
  action: z.string().min(1),
};

/**
 * Fatigue damage rate: a detail's Miner damage per monitored day, over the fatigue section's
 * `rate_window_h`, above ordered thresholds. A detail whose rate is not known yet is no evidence.
 */
export const FatigueDamageRateRuleSchema = z.strictObject({
  ...fatigueCommon,
  kind: z.literal('fatigue_damage_rate'),
  thresholds: z.array(z.strictObject({ level: LevelName, damage_per_day: z.number().finite().positive() })).min(1),
  /** Hysteresis, damage per day. */
  clear_margin_per_day: NonNegative.default(0),
  /** The rate is judged only once taken over at least this much monitored time (a few minutes extrapolated to a day say little), hours. */
  min_window_h: NonNegative.default(1),
});

/** Accumulated fatigue damage: a detail's Miner sum (1 = the S-N curve's life used up) above ordered fractions. */
export const FatigueDamageRuleSchema = z.strictObject({
  ...fatigueCommon,
  kind: z.literal('fatigue_damage'),
  thresholds: z.array(z.strictObject({ level: LevelName, fraction: z.number().finite().positive() })).min(1),
  /** Hysteresis, fraction of damage. */
  clear_margin: NonNegative.default(0),
});

export const StructuralRuleSchema = z.discriminatedUnion('kind', [LimitRuleSchema, RateRuleSchema, FatigueDamageRateRuleSchema, FatigueDamageRuleSchema]);

export type RuleScope = z.infer<typeof RuleScopeSchema>;
export type LimitRule = z.infer<typeof LimitRuleSchema>;
export type RateRule = z.infer<typeof RateRuleSchema>;
export type StructuralRule = z.infer<typeof StructuralRuleSchema>;
export type FatigueDamageRateRule = z.infer<typeof FatigueDamageRateRuleSchema>;
export type FatigueDamageRule = z.infer<typeof FatigueDamageRuleSchema>;
export type FatigueRule = FatigueDamageRateRule | FatigueDamageRule;
/** Rules judged on each group result (limit and rate), as opposed to the fatigue rules judged on fatigue snapshots. */
export type ResultRule = LimitRule | RateRule;
