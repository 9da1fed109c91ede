import { z } from 'zod';

/** Header authentication for a webhook: `<header>: <prefix><secret>`. */
export const WebhookAuthSchema = z
  .strictObject({
    header: z.string().regex(/^[A-Za-z0-9-]+$/, 'a header name: letters, digits and hyphens').default('authorization'),
    prefix: z.string().default('Bearer '),
    /** Environment variable holding the secret. */
    secret_env: z.string().min(1).optional(),
    /** File holding the secret (first line; mode 600), relative to the runtime file. */
    secret_file: z.string().min(1).optional(),
  })
  .refine((a) => (a.secret_env === undefined) !== (a.secret_file === undefined), {
    message: 'give exactly one of secret_env and secret_file (the secret never sits in the structure file)',
  });

/** Where a recipient hears: an MQTT topic (may contain {structure}, {zone}, {level}), a webhook, the log. */
export const RecipientChannelSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('mqtt'), topic: z.string().min(1) }),
  z.strictObject({
    kind: z.literal('webhook'),
    // fetch cannot send user info in a URL, and it would sit in the structure file: refuse it.
    url: z.url({ protocol: /^https?$/ }).refine((u) => !/^[a-z]+:\/\/[^/?#]*@/i.test(u), {
      message: 'no user name or password in a webhook URL: use auth (header, secret_env or secret_file)',
    }),
    timeout_ms: z.number().int().positive().default(5000),
    max_attempts: z.number().int().min(1).max(10).default(4),
    backoff_ms: z.number().int().nonnegative().default(500),
    /** A header carrying a secret on every POST; the secret from the environment or a file, never from here. */
    auth: WebhookAuthSchema.optional(),
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
  /**
   * Command topic per user: `{user}` is one whole topic level, which the broker's ACL ties to the
   * login (`pattern write .../ack/%u`), so the processor takes the user from the topic.
   */
  command_topic: z.string().min(1).default('strainward/{structure}/alarms/ack/{user}')
    .refine((t) => t.split('/').filter((l) => l === '{user}').length === 1 && !/[+#]/.test(t), {
      message: 'needs {user} as one whole topic level (e.g. strainward/{structure}/alarms/ack/{user}) and no wildcard: the user comes from the topic the broker authorised',
    }),
  /** Where the processor answers each command, per user (`{user}` filled in). */
  verdict_topic: z.string().min(1).default('strainward/{structure}/alarms/ack-verdict/{user}')
    .refine((t) => t.includes('{user}') && !/[+#]/.test(t), { message: 'needs {user} and no wildcard' }),
});

/** Raise/clear cycles above max_cycles within window_s: one suppressed_flapping alarm instead. */
export const FlappingSchema = z.strictObject({
  max_cycles: z.number().int().min(1).default(4),
  window_s: z.number().finite().positive().default(600),
});

export type RecipientChannel = z.infer<typeof RecipientChannelSchema>;
export type WebhookChannel = Extract<RecipientChannel, { kind: 'webhook' }>;
export type Recipient = z.infer<typeof RecipientSchema>;
export type Route = z.infer<typeof RouteSchema>;
