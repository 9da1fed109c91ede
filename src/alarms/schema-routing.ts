import { z } from 'zod';

/** Where a recipient hears: an MQTT topic (may contain {structure}, {zone}, {level}), a webhook, the log. */
export const RecipientChannelSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('mqtt'), topic: z.string().min(1) }),
  z.strictObject({
    kind: z.literal('webhook'),
    url: z.url({ protocol: /^https?$/ }),
    timeout_ms: z.number().int().positive().default(5000),
    max_attempts: z.number().int().min(1).max(10).default(4),
    backoff_ms: z.number().int().nonnegative().default(500),
  }),
  z.strictObject({ kind: z.literal('log') }),
]);

export const RecipientSchema = z.strictObject({
  id: z.string().min(1),
  kind: z.enum(['crew', 'on_call', 'control_room']),
  channels: z.array(RecipientChannelSchema).min(1),
});

/** A route: every listed criterion must match (an absent one matches anything). */
export const RouteSchema = z.strictObject({
  match: z
    .strictObject({
      structure: z.array(z.string().min(1)).optional(),
      zone: z.array(z.string().min(1)).optional(),
      alarm_class: z.array(z.enum(['structural', 'health'])).optional(),
      level: z.array(z.string().min(1)).optional(),
    })
    .prefault({}),
  /** Recipient ids per tier: tier 0 hears at once, the next tier after each escalation delay. */
  tiers: z.array(z.array(z.string().min(1)).min(1)).min(1),
});

/** Unacknowledged for after_s seconds (per tier) while active -> the next tier is told. */
export const EscalationSchema = z.strictObject({ after_s: z.number().finite().positive().default(900) });

/** Who may acknowledge which class, and the MQTT topic commands arrive on. */
export const AcknowledgementSchema = z.strictObject({
  allowed_users: z.strictObject({
    structural: z.array(z.string().min(1)).default([]),
    health: z.array(z.string().min(1)).default([]),
  }),
  command_topic: z.string().min(1).default('strainward/{structure}/alarms/ack'),
});

/** Raise/clear cycles above max_cycles within window_s: one suppressed_flapping alarm instead. */
export const FlappingSchema = z.strictObject({
  max_cycles: z.number().int().min(1).default(4),
  window_s: z.number().finite().positive().default(600),
});

export type RecipientChannel = z.infer<typeof RecipientChannelSchema>;
export type Recipient = z.infer<typeof RecipientSchema>;
export type Route = z.infer<typeof RouteSchema>;
