import { z } from 'zod';
import type { Alarm } from '../types.js';
import type { EngineState, KeyState } from './state.js';
import { SNAPSHOT_FORMAT, SNAPSHOT_VERSION } from './state.js';
import { hampelStateSchema } from './hampel.js';

const Num = z.number();
const NullNum = z.number().nullable();
const Window = z.strictObject({ tMs: z.array(Num), v: z.array(Num) });

const KeyStateSchema = z.strictObject({
  debounce: z.strictObject({ confirmed: z.number().int(), aboveSinceMs: z.array(NullNum), belowSinceMs: z.array(NullNum) }),
  prevRaw: z.number().int(),
  seq: z.number().int(),
  clearsMs: z.array(Num),
  quietSinceMs: NullNum,
  // Added within version 2 (optional: every older snapshot still reads the same).
  judgedToMs: Num.optional(),
  judgedSeq: Num.optional(),
  trend: Window.optional(),
  rate: Window.optional(),
  hampel: hampelStateSchema.optional(),
  flatline: z
    .strictObject({ runStartMs: NullNum, minT: z.array(Num), minV: z.array(Num), maxT: z.array(Num), maxV: z.array(Num) })
    .optional(),
});

const SubjectSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('group'), groupId: z.string() }),
  z.strictObject({ kind: z.literal('channel'), loggerId: z.string(), channelId: z.string(), groupId: z.string().nullable() }),
  z.strictObject({ kind: z.literal('logger'), loggerId: z.string() }),
  z.strictObject({ kind: z.literal('component'), component: z.string() }),
  // Added within version 2 (a new kind of subject: every older snapshot still reads the same).
  z.strictObject({ kind: z.literal('detail'), detailId: z.string(), groupId: z.string() }),
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

const SequenceSchema = z.strictObject({
  lastSeq: Num, lastTimeMs: Num, backwards: z.number().int(), repeated: z.number().int(), restarts: z.number().int(), restartsMs: z.array(Num),
});

/** Schema of a snapshot in the current format: a restored snapshot is checked before the engine trusts it. */
export const EngineStateSchema = z.strictObject({
  format: z.literal(SNAPSHOT_FORMAT),
  version: z.literal(SNAPSHOT_VERSION),
  idFloor: z.number().int().nonnegative(),
  startMs: NullNum,
  keys: z.record(z.string(), KeyStateSchema),
  alarms: z.record(z.string(), AlarmSchema),
  loggerLastMs: z.record(z.string(), Num),
  channelLastMs: z.record(z.string(), Num),
  sequences: z.record(z.string(), SequenceSchema),
  // Added within version 2: a snapshot written before it has none, which is an empty record.
  refusals: z.record(z.string(), z.array(Num)).default({}),
});

// The schema and the state types must say the same, field for field: a detector that adds a field
// to its state without adding it here no longer compiles (a snapshot it wrote would be refused on
// restart, which is how `pending` once stopped `run` from starting again).
type Same<A, B> = (<T>() => T extends A ? 1 : 2) extends (<T>() => T extends B ? 1 : 2) ? true : false;
const keyStateMatches: Same<z.infer<typeof KeyStateSchema>, KeyState> = true;
const alarmMatches: Same<z.infer<typeof AlarmSchema>, Alarm> = true;
const stateMatches: Same<z.infer<typeof EngineStateSchema>, EngineState> = true;
void [keyStateMatches, alarmMatches, stateMatches];
