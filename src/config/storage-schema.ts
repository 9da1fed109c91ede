import { z } from 'zod';
import { RuleScopeSchema } from '../alarms/schema-rules.js';
import { RESULT_QUANTITIES } from '../model/result.js';
import { IdSchema } from './material-schema.js';

/**
 * What goes to the database, per group: every result (`full`, measurement sw_result) or statistics
 * per interval of logger time (`summary`, measurement sw_summary), with full-rate event windows
 * around alarm transitions and configured triggers. The capture keeps every message regardless.
 */
const ResultsPolicy = z.enum(['full', 'summary']);
/** Interval of a summary, seconds of logger time; a whole number of milliseconds, at least 0.1 s, at most a day. */
const IntervalS = z.number().min(0.1).max(86_400).refine((s) => Number.isInteger(Math.round(s * 1e6) / 1e3), 'must be a whole number of milliseconds');

export const StoragePolicySchema = z.strictObject({
  results: ResultsPolicy.default('full'),
  /** Summary interval, s (intervals start at whole multiples of it since 1970-01-01T00:00Z, logger time). */
  interval_s: IntervalS.default(10),
});

export const GroupStorageSchema = z.strictObject({
  group: IdSchema,
  results: ResultsPolicy.optional(),
  interval_s: IntervalS.optional(),
});

const LevelTrigger = z.strictObject({
  id: IdSchema,
  kind: z.literal('level'),
  quantity: z.enum(RESULT_QUANTITIES),
  /** A trusted result above `above` (or below `below`), in the quantity's unit, opens a window. */
  above: z.number().finite().optional(),
  below: z.number().finite().optional(),
  scope: RuleScopeSchema.default({ kind: 'structure' }),
}).refine((t) => t.above !== undefined || t.below !== undefined, { message: 'give `above` or `below` (or both): the level that opens a window', path: ['above'] });

const RateTrigger = z.strictObject({
  id: IdSchema,
  kind: z.literal('rate'),
  quantity: z.enum(RESULT_QUANTITIES),
  /** Least-squares slope over `window_s` of trusted results, rising or falling faster than this (units per second), opens a window. */
  rate_per_s: z.number().finite().positive(),
  window_s: z.number().positive().max(3600),
  scope: RuleScopeSchema.default({ kind: 'structure' }),
});

export const StorageTriggerSchema = z.discriminatedUnion('kind', [LevelTrigger, RateTrigger]);

export const EventWindowsSchema = z.strictObject({
  /** Results kept before the trigger (logger time), s: taken from each group's pre-trigger ring. */
  before_s: z.number().min(0).max(600).default(10),
  /** Results stored at full rate after the trigger, s (a later trigger inside it extends it). */
  after_s: z.number().min(0).max(86_400).default(30),
  /** Alarm transitions (raised, level changed, cleared) open a window too. */
  on_alarms: z.boolean().default(true),
  /** Whose results a window stores: the group that triggered, its zone, or every group. */
  extent: z.enum(['group', 'zone', 'structure']).default('zone'),
  /** Most results each summary group keeps for the pre-trigger part (memory: see README); default from the logger's scan interval. */
  ring_results: z.number().int().min(1).max(1_000_000).optional(),
  triggers: z.array(StorageTriggerSchema).default([]),
});

export const RawStorageSchema = z.strictObject({
  /** sw_raw per scan (`full`), sw_raw_summary per interval (`summary`), or nothing in the database (`off`). */
  store: z.enum(['full', 'summary', 'off']).default('full'),
  /** Interval of sw_raw_summary, s; default: `default.interval_s`. */
  interval_s: IntervalS.optional(),
});

export const StorageConfigSchema = z.strictObject({
  default: StoragePolicySchema.default({ results: 'full', interval_s: 10 }),
  groups: z.array(GroupStorageSchema).default([]),
  raw: RawStorageSchema.default({ store: 'full' }),
  event_windows: EventWindowsSchema.default({ before_s: 10, after_s: 30, on_alarms: true, extent: 'zone', triggers: [] }),
  /** A group (or logger) silent this long on the pipeline clock has its open interval written, s. */
  close_after_s: z.number().positive().max(86_400).default(5),
});

export type StorageConfig = z.infer<typeof StorageConfigSchema>;
export type StorageTriggerConfig = z.infer<typeof StorageTriggerSchema>;
