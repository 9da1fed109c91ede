import { z } from 'zod';
import type { AlarmsConfig } from './schema.js';
import type { Ack, AckRefusal } from './types.js';

/** A user name as it can stand in a topic level and an ACL line: letters, digits, `.`, `_`, `-`. */
export const AckUserSchema = z.string().min(1).max(120).regex(/^[A-Za-z0-9._-]+$/, 'letters, digits, ".", "_" and "-" only (it is a topic level)');

/**
 * Payload of an acknowledgement command. The user is the topic's last level, which the broker's
 * ACL ties to the authenticated login (`pattern write .../ack/%u`); a `user` in the payload is
 * optional and must then be the same.
 */
export const AckCommandSchema = z.strictObject({
  alarm_id: z.string().min(1).max(400),
  user: AckUserSchema.optional(),
  reason: z.string().min(1).max(1000),
});
export type AckCommand = z.infer<typeof AckCommandSchema>;

const fill = (pattern: string, structureId: string, user: string): string => pattern.replaceAll('{structure}', structureId).replaceAll('{user}', user);

/** The command topic one user publishes on (`{structure}` and `{user}` filled in). */
export function ackTopic(cfg: AlarmsConfig, structureId: string, user: string): string {
  return fill(cfg.acknowledgement.command_topic, structureId, user);
}

/** The topic filter the processor subscribes to for every user's commands (`{user}` as `+`). */
export function ackSubscription(cfg: AlarmsConfig, structureId: string): string {
  return fill(cfg.acknowledgement.command_topic, structureId, '+');
}

/** Where the processor answers one user's commands (accepted or refused). */
export function ackVerdictTopic(cfg: AlarmsConfig, structureId: string, user: string): string {
  return fill(cfg.acknowledgement.verdict_topic, structureId, user);
}

/**
 * A matcher for one structure's command topics, prepared once: it returns the user a topic names
 * if it is a command topic (the text before and after `{user}` equal, one whole level between),
 * else null. It runs on every inbound message, so a scan topic is turned away by a prefix test
 * without splitting or allocating. Pure.
 */
export function ackUserMatcher(cfg: AlarmsConfig, structureId: string): (topic: string) => string | null {
  const [before, after] = fill(cfg.acknowledgement.command_topic, structureId, '\u0000').split('\u0000');
  return (topic) => {
    if (topic.length <= before.length + after.length || !topic.startsWith(before) || !topic.endsWith(after)) return null;
    const user = topic.slice(before.length, topic.length - after.length);
    return !user.includes('/') && AckUserSchema.safeParse(user).success ? user : null;
  };
}

/** The user a topic names if it is an acknowledgement command topic of this structure, else null. */
export function ackUserOfTopic(cfg: AlarmsConfig, structureId: string, topic: string): string | null {
  return ackUserMatcher(cfg, structureId)(topic);
}

/** The processor's answer to one command, published to the user's verdict topic (QoS 1, not retained). */
export interface AckVerdict {
  alarm_id: string;
  user: string;
  verdict: 'acknowledged' | 'refused';
  /** Refusal code (`unknown_alarm`, `user_not_allowed`, ...), null when acknowledged. */
  code: string | null;
  /** Why, in words; for an accepted command the alarm's state after it. */
  reason: string;
  /** Logger/processor time of the decision, ISO 8601 UTC. */
  at: string;
}

/**
 * Decode an MQTT ack payload received at atMs (injected clock). Bad input becomes an
 * `invalid_command` refusal naming the field, to be recorded and counted; it never throws.
 */
export function parseAckPayload(payload: Uint8Array | string, atMs: number, topicUser: string): { ok: true; ack: Ack } | { ok: false; refusal: AckRefusal } {
  const text = typeof payload === 'string' ? payload : Buffer.from(payload).toString('utf8');
  const refuse = (reason: string, raw: Record<string, unknown> = {}) => ({
    ok: false as const,
    refusal: {
      code: 'invalid_command' as const, reason, atMs,
      alarmId: typeof raw.alarm_id === 'string' ? raw.alarm_id : '',
      user: topicUser,
      userReason: typeof raw.reason === 'string' ? raw.reason : '',
    },
  });
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch {
    return refuse('payload is not JSON');
  }
  const parsed = AckCommandSchema.safeParse(json);
  if (!parsed.success) {
    const i = parsed.error.issues[0];
    const raw = typeof json === 'object' && json !== null ? (json as Record<string, unknown>) : {};
    return refuse(`${i.path.join('.') || '(root)'}: ${i.message}`, raw);
  }
  const c = parsed.data;
  if (c.user !== undefined && c.user !== topicUser) {
    return {
      ok: false,
      refusal: {
        code: 'identity_mismatch', alarmId: c.alarm_id, user: topicUser, userReason: c.reason, atMs,
        reason: `the payload names user "${c.user}" but the command came on the topic of "${topicUser}"`,
      },
    };
  }
  return { ok: true, ack: { type: 'ack', alarmId: c.alarm_id, user: topicUser, reason: c.reason, atMs } };
}

/**
 * For the CLI: the topic and payload that acknowledge an alarm (validated; throws a message
 * naming the bad field). Publish it at QoS 1.
 */
export function buildAckCommand(
  cfg: AlarmsConfig,
  structureId: string,
  cmd: { alarmId: string; user: string; reason: string },
): { topic: string; payload: string } {
  const parsed = AckCommandSchema.required({ user: true }).safeParse({ alarm_id: cmd.alarmId, user: cmd.user, reason: cmd.reason });
  if (!parsed.success) {
    const i = parsed.error.issues[0];
    throw new Error(`acknowledgement ${i.path.join('.')}: ${i.message}`);
  }
  return { topic: ackTopic(cfg, structureId, parsed.data.user), payload: JSON.stringify(parsed.data) };
}

/**
 * For the CLI: validate and publish an acknowledgement at QoS 1 through an injected publish
 * (e.g. mqtt.js publishAsync). Resolves once the broker has it; the processor's verdict arrives
 * on the user's verdict topic (`ackVerdictTopic`).
 */
export async function publishAck(
  publish: (topic: string, payload: string, opts: { qos: 1; retain: false }) => Promise<void>,
  cfg: AlarmsConfig,
  structureId: string,
  cmd: { alarmId: string; user: string; reason: string },
): Promise<{ topic: string; payload: string }> {
  const built = buildAckCommand(cfg, structureId, cmd);
  await publish(built.topic, built.payload, { qos: 1, retain: false });
  return built;
}
