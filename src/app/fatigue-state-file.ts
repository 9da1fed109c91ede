import { z } from 'zod';
import { loadSnapshot, saveSnapshot } from '../alarms/persistence/snapshot-file.js';
import type { FatigueStates } from '../pipeline/fatigue-stage.js';

/** Version of the fatigue state file; a change of shape is a new version with a migration. */
export const FATIGUE_STATE_VERSION = 1;

// NaN (no value yet) is written as null: JSON has no NaN.
const num = z.number().nullable().transform((v) => (v === null ? NaN : v));
const DetailStateSchema = z.strictObject({
  peakValley: z.strictObject({ gateMPa: z.number(), direction: z.union([z.literal(-1), z.literal(0), z.literal(1)]), candidate: num, low: num, high: num }),
  rainflow: z.strictObject({ points: z.array(z.number()) }),
  histogram: z.strictObject({ binWidthMPa: z.number().positive(), counts: z.array(z.number().min(0)).min(2) }),
  damageCounted: z.number().min(0), cyclesCounted: z.number().min(0),
  monitoredMs: z.number().min(0), notMonitoredMs: z.number().min(0),
  breaks: z.number().int().min(0), samples: z.number().int().min(0), flaggedSamples: z.number().int().min(0),
  lastTrustedMs: num, brokenSinceTrusted: z.boolean(), firstMs: num,
  checkpointMonitoredMs: z.array(z.number()).min(1), checkpointDamage: z.array(z.number()).min(1), nextCheckpointMs: z.number(),
});
const FileSchema = z.strictObject({ version: z.literal(FATIGUE_STATE_VERSION), details: z.record(z.string(), DetailStateSchema) });

export function serialiseFatigueStates(states: FatigueStates): string {
  return JSON.stringify({ version: FATIGUE_STATE_VERSION, details: Object.fromEntries(states) }, (_k, v) => (typeof v === 'number' && Number.isNaN(v) ? null : v));
}

/** Parses a state file's text; throws with the field and reason when it cannot be read. */
export function parseFatigueStates(json: string): FatigueStates {
  const r = FileSchema.safeParse(JSON.parse(json));
  if (!r.success) {
    const i = r.error.issues[0];
    throw new Error(`fatigue state file: ${i.path.join('.') || '(root)'}: ${i.message}`);
  }
  return new Map(Object.entries(r.data.details));
}

/**
 * Restores the fatigue states, or an empty map when there is no file. A detail whose histogram no
 * longer matches the configuration is the caller's to reset (it says so in the log).
 */
export async function loadFatigueStates(path: string): Promise<FatigueStates> {
  const text = await loadSnapshot(path);
  return text === null ? new Map() : parseFatigueStates(text);
}

/** Atomic write (temporary file, fsync, rename), like the alarm state. */
export function saveFatigueStates(path: string, states: FatigueStates): Promise<void> {
  return saveSnapshot(path, serialiseFatigueStates(states));
}
