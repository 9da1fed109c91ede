import { z } from 'zod';
import { IdSchema, MaterialSchema } from './material-schema.js';
import { GaugeSchema, TemperatureSensorSchema } from './gauge-schema.js';
import { GroupSchema } from './group-schema.js';
import { AlarmsSectionSchema } from '../alarms/schema.js';
import { FatigueConfigSchema } from './fatigue-schema.js';
import { RezeroConfigSchema } from '../rezero/schema.js';
import { StorageConfigSchema } from './storage-schema.js';

/**
 * One instrumented structure: materials, loggers, gauges, temperature sensors and gauge groups.
 * Every object is strict: an unknown key is an error, never ignored (a misspelt key would
 * otherwise silently fall back to a default).
 */
export const LoggerSchema = z.strictObject({
  id: IdSchema,
  description: z.string().optional(),
  /** Nominal time between scans, seconds. Silence beyond a multiple of it is an alarm. */
  expected_interval_s: z.number().positive(),
});

export const StructureConfigSchema = z.strictObject({
  schema_version: z.literal(1),
  structure: z.strictObject({
    id: IdSchema,
    name: z.string().min(1),
    location: z.string().min(1),
    description: z.string().optional(),
  }),
  materials: z.array(MaterialSchema).min(1),
  loggers: z.array(LoggerSchema).min(1),
  temperature_sensors: z.array(TemperatureSensorSchema).default([]),
  gauges: z.array(GaugeSchema).min(1),
  groups: z.array(GroupSchema).min(1),
  /**
   * Alarm rules, routing and health settings (the alarms module's schema), or `{ disabled: true }`.
   * Absent: no alarms, and the live job refuses to start (`run` exit 3).
   */
  alarms: AlarmsSectionSchema.optional(),
  /** Fatigue details: rainflow counting and damage per detail (absent: no fatigue counting). */
  fatigue: FatigueConfigSchema.optional(),
  /** Who may take a group's current readings as its new zero (absent: nobody; the processor does not listen). */
  rezero: RezeroConfigSchema.optional(),
  /** What goes to the database at what rate: full or per-interval summaries per group, event windows, raw archive (absent: everything in full). */
  storage: StorageConfigSchema.optional(),
});

export type StructureConfig = z.infer<typeof StructureConfigSchema>;
export type StructureConfigInput = z.input<typeof StructureConfigSchema>;
