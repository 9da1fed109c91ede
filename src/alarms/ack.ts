import { z } from 'zod';
import type { AlarmsConfig } from './schema.js';
import type { Ack, AckRefusal } from './types.js';

/** Payload of an acknowledgement command on the MQTT command topic. */
export const AckCommandSchema = z.strictObject({
  alarm_id: z.string().min(1).max(400),
  user: z.string().min(1).max(120),
  reason: z.string().min(1).max(1000),
});
export type AckCommand = z.infer<typeof AckCommandSchema>;

/** The command topic of a structure (`{structure}` filled in). */
export function ackTopic(cfg: AlarmsConfig, structureId: string): string {
  return cfg.acknowledgement.command_topic.replaceAll('{structure}', structureId);
}

/**
 * Decode an MQTT ack payload received at atMs (injected clock). Bad input becomes an
 * `invalid_command` refusal naming the field, to be recorded and counted; it never throws.
 */
export function parseAckPayload(payload: Uint8Array | string, atMs: number): { ok: true; ack: Ack } | { ok: false; refusal: AckRefusal } {
  const text = typeof payload === 'string' ? payload : Buffer.from(payload).toString('utf8');
  const refuse = (reason: string, raw: Record<string, unknown> = {}) => ({
    ok: false as const,
    refusal: {
      code: 'invalid_command' as const, reason, atMs,
      alarmId: typeof raw.alarm_id === 'string' ? raw.alarm_id : '',
      user: typeof raw.user === 'string' ? raw.user : '',
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
  return { ok: true, ack: { type: 'ack', alarmId: c.alarm_id, user: c.user, reason: c.reason, atMs } };
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
  const parsed = AckCommandSchema.safeParse({ alarm_id: cmd.alarmId, user: cmd.user, reason: cmd.reason });
  if (!parsed.success) {
    const i = parsed.error.issues[0];
    throw new Error(`acknowledgement ${i.path.join('.')}: ${i.message}`);
  }
  return { topic: ackTopic(cfg, structureId), payload: JSON.stringify(parsed.data) };
}

/**
 * For the CLI: validate and publish an acknowledgement at QoS 1 through an injected publish
 * (e.g. mqtt.js publishAsync). Resolves once the broker has it; the processor's verdict arrives
 * as an `acknowledged` message or a refusal in the alarm log.
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
