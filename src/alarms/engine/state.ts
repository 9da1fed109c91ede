import { z } from 'zod';
import type { Alarm } from '../types.js';
import type { DebounceState } from './debounce.js';
import type { SampleWindow } from './sample-window.js';
import type { HampelState } from './hampel.js';
import type { FlatlineState } from './flatline.js';

/** Everything remembered for one (rule or check, subject) key. Plain JSON. */
export interface KeyState {
  debounce: DebounceState;
  /** Raw level at the previous evaluation (to count repeats). */
  prevRaw: number;
  /** Occurrences so far (the n in alarm ids). */
  seq: number;
  /** Times (ms) of the clears inside the flapping window. */
  clearsMs: number[];
  /** While flapping: since when the condition has been gone; null while present. */
  quietSinceMs: number | null;
  trend?: SampleWindow;
  rate?: SampleWindow;
  hampel?: HampelState;
  flatline?: FlatlineState;
}

/** The whole engine state: what a snapshot holds. */
export interface EngineState {
  version: 1;
  /** First tick seen: a logger never heard from is silent since then. */
  startMs: number | null;
  keys: Record<string, KeyState>;
  /** Visible alarms (anything not closed) by key. */
  alarms: Record<string, Alarm>;
  /** Last frame arrival per logger id, epoch ms. */
  loggerLastMs: Record<string, number>;
  /** Last usable reading per `logger/channel`, logger time, epoch ms. */
  channelLastMs: Record<string, number>;
}

export function newEngineState(): EngineState {
  return { version: 1, startMs: null, keys: {}, alarms: {}, loggerLastMs: {}, channelLastMs: {} };
}

const Num = z.number();
const NullNum = z.number().nullable();
const Window = z.strictObject({ tMs: z.array(Num), v: z.array(Num) });

const KeyStateSchema = z.strictObject({
  debounce: z.strictObject({ confirmed: z.number().int(), aboveSinceMs: z.array(NullNum), belowSinceMs: z.array(NullNum) }),
  prevRaw: z.number().int(),
  seq: z.number().int(),
  clearsMs: z.array(Num),
  quietSinceMs: NullNum,
  trend: Window.optional(),
  rate: Window.optional(),
  hampel: z.strictObject({ window: z.array(Num) }).optional(),
  flatline: z
    .strictObject({ runStartMs: NullNum, minT: z.array(Num), minV: z.array(Num), maxT: z.array(Num), maxV: z.array(Num) })
    .optional(),
});

const SubjectSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('group'), groupId: z.string() }),
  z.strictObject({ kind: z.literal('channel'), loggerId: z.string(), channelId: z.string(), groupId: z.string().nullable() }),
  z.strictObject({ kind: z.literal('logger'), loggerId: z.string() }),
]);

export const AlarmSchema = z.strictObject({
  id: z.string(),
  key: z.string(),
  structureId: z.string(),
  zone: z.string(),
  alarmClass: z.enum(['structural', 'health']),
  ruleId: z.string(),
  subject: SubjectSchema,
  location: z.string(),
  quantity: z.string(),
  value: NullNum,
  limit: NullNum,
  units: z.string(),
  level: z.string(),
  levelIndex: z.number().int(),
  state: z.enum(['active_unacknowledged', 'active_acknowledged', 'cleared_unacknowledged', 'closed']),
  sinceMs: Num,
  lastChangeMs: Num,
  trendPerS: NullNum,
  action: z.string(),
  raiseCount: z.number().int(),
  repeatCount: z.number().int(),
  tier: z.number().int(),
  tierSinceMs: Num,
  flapping: z.boolean(),
  suppressedCount: z.number().int(),
  acknowledgement: z.strictObject({ user: z.string(), reason: z.string(), atMs: Num }).nullable(),
});

/** Schema of a snapshot file: a restored snapshot is checked before the engine trusts it. */
export const EngineStateSchema = z.strictObject({
  version: z.literal(1),
  startMs: NullNum,
  keys: z.record(z.string(), KeyStateSchema),
  alarms: z.record(z.string(), AlarmSchema),
  loggerLastMs: z.record(z.string(), Num),
  channelLastMs: z.record(z.string(), Num),
});

/** Serialise (a deep copy as JSON text). */
export function serialiseState(state: EngineState): string {
  return JSON.stringify(state);
}

/** Parse and check a snapshot; throws an Error naming the first bad field. */
export function parseState(json: string): EngineState {
  const parsed = EngineStateSchema.safeParse(JSON.parse(json));
  if (!parsed.success) {
    const first = parsed.error.issues[0];
    throw new Error(`alarm snapshot invalid at ${first.path.join('.') || '(root)'}: ${first.message}`);
  }
  return parsed.data as EngineState;
}
