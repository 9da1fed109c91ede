import { copyFile, rename } from 'node:fs/promises';
import { z } from 'zod';
import { loadSnapshot, saveSnapshot } from '../alarms/persistence/snapshot-file.js';
import type { ComponentFault } from '../alarms/types.js';
import type { CompiledFatigue } from '../config/compile-fatigue.js';
import { newDetailState } from '../fatigue/detail.js';
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

/** Component name of the operations alarm raised when fatigue state had to be started afresh. */
export const FATIGUE_STATE_COMPONENT = 'fatigue-state';

/** What a start continues from: the states, and the operations alarms of any reset (raised and cleared at once, visible until acknowledged). */
export interface OpenedFatigueStates {
  states: FatigueStates;
  startInputs: ComponentFault[];
}

/** `20261202T073012Z`: a file-name-safe UTC time. */
const stamp = (ms: number): string => new Date(ms).toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');

/**
 * Reads the fatigue state file at a start. Never stops the start (a processor that does not start
 * counts nothing and raises no alarm): a file that cannot be read is kept as
 * `<file>.unreadable-<time>` and counting starts afresh; a detail whose gate or histogram no longer
 * matches its configuration (its counts cannot be continued) starts afresh, the file as it was kept
 * as `<file>.before-<time>`. Each is a warning and a `component_fault` of `fatigue-state`.
 * Restored details no longer configured are kept in the map, so they are saved again, not lost.
 */
export async function openFatigueStates(
  cfg: CompiledFatigue, path: string, deps: { now: () => number; warn: (event: string, detail: Record<string, unknown>) => void },
): Promise<OpenedFatigueStates> {
  const nowMs = deps.now();
  const fault = (failure: string): ComponentFault[] => [
    { type: 'component', component: FATIGUE_STATE_COMPONENT, failure, atMs: nowMs },
    { type: 'component', component: FATIGUE_STATE_COMPONENT, failure: null, atMs: nowMs },
  ];
  let states: FatigueStates;
  try {
    states = await loadFatigueStates(path);
  } catch (err) {
    const reason = err instanceof Error ? err.message : String(err);
    const keptAs = `${path}.unreadable-${stamp(nowMs)}`;
    await keepAside(path, keptAs, reason, rename);
    deps.warn('fatigue_state_reset', { file: path, keptAs, reason, message: `The fatigue state file could not be read and is kept as ${keptAs}; fatigue counting starts afresh (damage so far is not included). Replay the capture to recover it.` });
    return { states: new Map(), startInputs: fault(`the fatigue state file could not be read (${reason}); counting started afresh, the old file kept as ${keptAs}`) };
  }
  const reset: string[] = [];
  for (const d of cfg.details) {
    const s = states.get(d.id);
    if (s === undefined) continue;
    const p = d.params;
    if (s.peakValley.gateMPa !== p.gateMPa || s.histogram.binWidthMPa !== p.binWidthMPa || s.histogram.counts.length !== p.bins + 1) {
      states.set(d.id, newDetailState(p));
      reset.push(d.id);
    }
  }
  if (reset.length === 0) return { states, startInputs: [] };
  const keptAs = `${path}.before-${stamp(nowMs)}`;
  await keepAside(path, keptAs, 'details reset', copyFile);
  deps.warn('fatigue_detail_reset', { file: path, keptAs, details: reset, message: `The gate or histogram of ${reset.join(', ')} changed: their counting starts afresh (the file as it was is kept as ${keptAs}). Replay the capture with the new configuration to recover the damage so far.` });
  return { states, startInputs: fault(`gate or histogram of fatigue detail(s) ${reset.join(', ')} changed: counted afresh, the old state kept as ${keptAs}`) };
}

async function keepAside(path: string, keptAs: string, reason: string, how: (from: string, to: string) => Promise<void>): Promise<void> {
  try {
    await how(path, keptAs);
  } catch (e) {
    // Not kept aside, the next save would overwrite it: better not to start than to lose it.
    throw new Error(`fatigue state file ${path} cannot be continued (${reason}) nor kept aside as ${keptAs}: ${(e as Error).message}`);
  }
}
