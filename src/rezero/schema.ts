import { z } from 'zod';
import { AckUserSchema } from '../alarms/ack.js';
import { IdSchema } from '../config/material-schema.js';
import type { StructureConfig } from '../config/structure-schema.js';
import type { ValidationProblem } from '../validation/issues.js';

const userTopic = (what: string) => z.string().min(1)
  .refine((t) => t.split('/').filter((l) => l === '{user}').length === 1 && !/[+#]/.test(t), {
    message: `needs {user} as one whole topic level and no wildcard: the user comes from the topic the broker authorised (${what})`,
  });

/**
 * The structure file's `rezero` section: who may take a group's current readings as its new zero,
 * for which groups (by id or zone), and the per-user topics, with the identity scheme of
 * acknowledgements: `{user}` is a whole topic level that the broker's ACL ties to the login.
 */
export const RezeroConfigSchema = z.strictObject({
  allowed: z.array(z.strictObject({
    user: AckUserSchema,
    groups: z.array(IdSchema).default([]),
    zones: z.array(IdSchema).default([]),
  }).refine((a) => a.groups.length + a.zones.length > 0, { message: 'name the groups or the zones this user may rezero' })).min(1),
  /** Readings older than this (pipeline clock, at the request) are not taken as a zero: the group's logger may have gone silent. */
  max_reading_age_s: z.number().finite().positive().default(30),
  command_topic: userTopic('e.g. strainward/{structure}/rezero/{user}').default('strainward/{structure}/rezero/{user}'),
  verdict_topic: userTopic('e.g. strainward/{structure}/rezero-verdict/{user}').default('strainward/{structure}/rezero-verdict/{user}'),
});
export type RezeroConfig = z.infer<typeof RezeroConfigSchema>;

/** The groups and zones `allowed` names must exist (a typo would silently allow nothing). */
export function checkRezeroScopes(c: StructureConfig): ValidationProblem[] {
  const problems: ValidationProblem[] = [];
  const groups = new Set(c.groups.map((g) => g.id));
  const zones = new Set(c.groups.map((g) => g.zone));
  c.rezero?.allowed.forEach((a, i) => {
    a.groups.forEach((id, j) => { if (!groups.has(id)) problems.push({ path: `rezero.allowed[${i}].groups[${j}]`, reason: `unknown group "${id}"` }); });
    a.zones.forEach((z, j) => { if (!zones.has(z)) problems.push({ path: `rezero.allowed[${i}].zones[${j}]`, reason: `unknown zone "${z}" (zones: ${[...zones].join(', ')})` }); });
  });
  return problems;
}

/** Payload of a rezero request; the user is the topic's last level (a `user` here must be the same). */
export const RezeroCommandSchema = z.strictObject({
  group_id: z.string().min(1).max(200),
  user: AckUserSchema.optional(),
  reason: z.string().min(1).max(1000),
  /** Chosen by the requester, echoed in the verdict: tells its answer from another terminal's. */
  request_id: z.string().min(1).max(100).optional(),
});
export type RezeroCommand = z.infer<typeof RezeroCommandSchema>;

/** One channel's zero before and after, in its reading's unit (mV/V, microstrain, Hz, digits). */
const ZeroChangeSchema = z.strictObject({
  gauge: z.string().min(1), channel: z.string().min(1), unit: z.string().min(1), old_zero: z.number(), new_zero: z.number(),
});

/**
 * The audit record of an accepted rezero: who, when (the processor's clock at the request), why,
 * the logger time of the readings taken (the new zero applies to later readings), and the old and
 * new zero per channel and of the zero-reading temperature. The zero-overrides file and the audit
 * file hold these; restart and replay install them as they are.
 */
export const RezeroRecordSchema = z.strictObject({
  id: z.string().min(1),
  structure: z.string().min(1),
  group_id: z.string().min(1),
  user: z.string().min(1),
  reason: z.string(),
  at: z.string(),
  at_ms: z.number(),
  readings_time: z.string(),
  readings_time_ms: z.number(),
  elements: z.array(ZeroChangeSchema).min(1),
  companion: ZeroChangeSchema.nullable(),
  zero_temperature_degC: z.strictObject({ old: z.number(), new: z.number() }),
});
export type RezeroRecord = z.infer<typeof RezeroRecordSchema>;

export const REZERO_REFUSALS = [
  'invalid_command', 'identity_mismatch', 'unknown_group', 'user_not_allowed', 'no_readings', 'readings_stale',
  'readings_incomplete', 'readings_out_of_range', 'readings_suspect', 'temperature_missing', 'temperature_stale',
] as const;
export type RezeroRefusalCode = (typeof REZERO_REFUSALS)[number];

/** The processor's answer on the user's verdict topic (QoS 1, not retained). */
export const RezeroVerdictSchema = z.object({
  request_id: z.string().nullable(),
  group_id: z.string(),
  user: z.string(),
  verdict: z.enum(['accepted', 'refused']),
  code: z.string().nullable(),
  reason: z.string(),
  at: z.string(),
  record: RezeroRecordSchema.nullable(),
  /** Accepted: the overrides and audit files were written (false: in effect, but a restart would lose it). */
  persisted: z.boolean(),
});
export type RezeroVerdict = z.infer<typeof RezeroVerdictSchema>;
