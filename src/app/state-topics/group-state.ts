import { z } from 'zod';
import { QUALITY_FLAGS } from '../../model/quality.js';
import { RESULT_QUANTITIES, type GroupResult } from '../../model/result.js';

/**
 * One group's latest result, retained on `state_topics.groups_topic` for any MQTT client (a
 * dashboard, a control-room display) that wants the current state without the database. Sent at a
 * low rate; the database keeps every result.
 */
export const GroupStateSchema = z.object({
  schema: z.literal('strainward.group-state/1'),
  structure: z.string().min(1),
  processor: z.string().min(1),
  group: z.string().min(1),
  zone: z.string(),
  logger: z.string().min(1),
  /** The logger's time of the scan the result is computed from, ISO 8601 UTC. */
  time: z.iso.datetime(),
  seq: z.number().int().nonnegative().nullable(),
  /** Processor time of this message: a result much older than it means the group has gone quiet. */
  published_at: z.iso.datetime(),
  /** Quality flags; any flag makes the result doubtful (never a reassurance). */
  flags: z.array(z.enum(QUALITY_FLAGS)),
  doubtful: z.boolean(),
  /** The result quantities that apply to the group, units in the names (README, database layout). */
  values: z.partialRecord(z.enum(RESULT_QUANTITIES), z.number()),
});

export type GroupState = z.infer<typeof GroupStateSchema>;

/** `{structure}` and `{group}` filled. */
export function groupStateTopic(pattern: string, structureId: string, groupId: string): string {
  return pattern.replaceAll('{structure}', structureId).replaceAll('{group}', groupId);
}

/** The retained message's body. Pure. */
export function groupState(r: GroupResult, processor: string, publishedMs: number): GroupState {
  return {
    schema: 'strainward.group-state/1', structure: r.structureId, processor, group: r.groupId, zone: r.zone, logger: r.loggerId,
    time: new Date(r.timeMs).toISOString(), seq: r.seq, published_at: new Date(publishedMs).toISOString(),
    flags: [...r.flags], doubtful: r.flags.length > 0, values: { ...r.values },
  };
}
