import { z } from 'zod';

const NonNegative = z.number().finite().nonnegative();
const Positive = z.number().finite().positive();

/** Fields every health check shares. A check without its own level uses `health.level`. */
const common = {
  enabled: z.boolean().default(true),
  level: z.string().min(1).optional(),
  action: z.string().min(1).optional(),
  /** The condition must be gone this long before the alarm clears. */
  off_delay_s: NonNegative.default(0),
};

/**
 * Instrument-health settings. Every check is on unless disabled: silence is never all-clear.
 * Expected logger intervals and channel valid ranges come from the structure configuration
 * (through the lookups), not from here.
 */
export const HealthConfigSchema = z.strictObject({
  /** Default level for every health alarm (a name from `levels`). */
  level: z.string().min(1),
  /** A logger silent for missing_after_intervals x its expected interval. */
  no_data: z.strictObject({ ...common, missing_after_intervals: Positive.default(3) }).prefault({}),
  /** A channel null or absent (while its logger reports) for missing_after_intervals x interval. */
  channel_missing: z.strictObject({ ...common, missing_after_intervals: Positive.default(3) }).prefault({}),
  /** A channel varying less than tolerance (channel unit, max - min) over window_s. */
  flatline: z.strictObject({ ...common, window_s: Positive.default(3600), tolerance: NonNegative.default(0) }).prefault({}),
  /**
   * Hampel test on each channel (engine/hampel.ts): a reading further than the limit,
   * max(k_mads x 1.4826 x MAD, min_deviation), from both the median of the previous window_samples
   * readings and the reading before it, that comes back within half the limit of the reading before
   * it within 2 readings, is a spike. min_deviation (channel unit) ignores deviations too small to
   * matter when the MAD is near zero. The same test flags the results (`reading_spike`).
   */
  spike: z
    .strictObject({
      ...common,
      window_samples: z.number().int().min(3).default(15),
      k_mads: Positive.default(3),
      min_deviation: NonNegative.default(0),
      /**
       * min_deviation per channel unit (e.g. {"mV/V": 0.02, microstrain: 40, Hz: 1.5}): one structure
       * mixes units, and a spike must stand clear of what traffic does to each channel.
       */
      min_deviation_by_unit: z.record(z.string().min(1), NonNegative).default({}),
      off_delay_s: NonNegative.default(60),
    })
    .prefault({}),
  /** A reading outside the channel's valid range (open circuit, short, saturated input). */
  out_of_range: z.strictObject(common).prefault({}),
  /**
   * The logger's clock against the processor's: offset = logger timestamp - arrival time. Ahead by
   * more than ahead_s is impossible for a good clock (transport only delays); behind by more than
   * behind_s is a slow clock or data arriving late (a broker backlog after an outage): both matter,
   * because temperature is joined to strain by the loggers' timestamps.
   */
  clock_offset: z.strictObject({ ...common, ahead_s: Positive.default(2), behind_s: Positive.default(300) }).prefault({}),
  /**
   * A logger whose scan counter (`seq`) restarted (went back or stayed while its time went on) more
   * than max_per_hour times in the last hour: reboots, a failing power supply or unit.
   */
  sequence_restart: z.strictObject({ ...common, max_per_hour: z.number().int().min(0).default(2) }).prefault({}),
  /**
   * A logger whose messages are refused (dead-lettered: bad JSON, unknown channel, a clock far
   * ahead...) more than max_per_window times within window_s: its data is not reaching the results.
   */
  messages_refused: z.strictObject({ ...common, max_per_window: z.number().int().min(0).default(5), window_s: Positive.default(600) }).prefault({}),
  /** A result flagged residual_high (redundant group does not fit a strain state). */
  residual_high: z.strictObject(common).prefault({}),
  /** A result flagged temperature_stale or temperature_missing. */
  temperature_stale: z.strictObject(common).prefault({}),
  /** A result flagged element_missing, element_out_of_range, companion_missing or underdetermined. */
  result_incomplete: z.strictObject(common).prefault({}),
  /** A part of the processor reports a fault (the spool cannot be written). */
  component_fault: z.strictObject(common).prefault({}),
});

export type HealthConfig = z.infer<typeof HealthConfigSchema>;
/** Names of the health checks, the `check` of every health alarm. */
export const HEALTH_CHECKS = [
  'no_data',
  'channel_missing',
  'flatline',
  'spike',
  'out_of_range',
  'clock_offset',
  'sequence_restart',
  'messages_refused',
  'residual_high',
  'temperature_stale',
  'result_incomplete',
  'component_fault',
] as const;
export type HealthCheck = (typeof HEALTH_CHECKS)[number];
