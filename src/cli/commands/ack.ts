import { Command } from 'commander';
import type { MqttClient } from 'mqtt';
import { z } from 'zod';
import { AckCommandSchema, AckUserSchema, ackTopic, ackVerdictTopic, publishAck, type AckVerdict } from '../../alarms/index.js';
import { ConfigError } from '../../config/compile.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { AckRefusedError } from '../errors.js';
import { parseOptions } from '../options.js';
import { connectOneShot } from '../../adapters/mqtt/one-shot-client.js';
import { brokerAccess } from '../../app/broker-access.js';
import { withTimeout } from '../../app/time-bound.js';

/** Options of `strainward ack`; the alarm, user and reason obey the command payload's own limits. */
export const AckOptionsSchema = z.strictObject({
  config: z.string().min(1),
  alarm: AckCommandSchema.shape.alarm_id,
  user: AckUserSchema,
  reason: AckCommandSchema.shape.reason,
  /** Broker login (default: the --user name itself, which the broker's ACL ties to its ack topic). */
  mqttUsername: z.string().min(1).optional(),
  /** Environment variable holding that user's broker password. */
  mqttPasswordEnv: z.string().min(1).optional(),
  timeoutMs: z.coerce.number().int().positive().default(10_000),
});
export type AckOptions = z.infer<typeof AckOptionsSchema>;

/** The broker did not take the command (unreachable, refused, timed out). */
export class AckPublishError extends Error {
  constructor(message: string, cause?: unknown) {
    super(message, { cause });
    this.name = 'AckPublishError';
  }
}

/**
 * Publishes one acknowledgement command (QoS 1) on the user's command topic, with a client of its
 * own (a fresh client id, clean session: never the processor's), and waits for the processor's
 * verdict on the user's verdict topic (subscribed before publishing, so it cannot be missed).
 * Resolves with an `acknowledged` verdict; throws AckRefusedError for a refusal or no verdict
 * within `timeoutMs`, AckPublishError when the broker did not take the command.
 */
export async function sendAck(raw: unknown, env: NodeJS.ProcessEnv = process.env): Promise<{ topic: string; verdict: AckVerdict }> {
  const o = parseOptions(AckOptionsSchema, raw);
  const { runtime: rc, structure, baseDir } = await loadRuntimeFile(o.config);
  const alarmsCfg = structure.alarms;
  if (alarmsCfg === null) throw new ConfigError(o.config, [{ path: 'alarms', reason: 'the structure file has no alarms section: there is nothing to acknowledge' }]);
  const passwordEnv = o.mqttPasswordEnv ?? rc.mqtt.password_env;
  let client: MqttClient;
  try {
    // The acknowledgement role logs in as the user named: the broker's ACL ties the topic to it.
    const access = { ...brokerAccess(rc, baseDir, env), username: o.mqttUsername ?? o.user, password: passwordEnv ? env[passwordEnv] : undefined };
    client = await connectOneShot(access, { clientIdPrefix: `${rc.mqtt.client_id}-ack`, protocolVersion: rc.mqtt.protocol_version, timeoutMs: o.timeoutMs });
  } catch (err) {
    throw new AckPublishError(`cannot connect to ${rc.mqtt.url}: ${err instanceof Error ? err.message : String(err)}`, err);
  }
  try {
    const verdictTopic = ackVerdictTopic(alarmsCfg, structure.structureId, o.user);
    const verdict = new Promise<AckVerdict>((resolveVerdict) => {
      client.on('message', (topic, payload) => {
        if (topic !== verdictTopic) return;
        const parsed = AckVerdictSchema.safeParse(safeJson(payload.toString('utf8')));
        if (parsed.success && parsed.data.alarm_id === o.alarm) resolveVerdict(parsed.data);
      });
    });
    await withTimeout(client.subscribeAsync(verdictTopic, { qos: 1 }), o.timeoutMs, `the broker did not confirm the verdict subscription within ${o.timeoutMs} ms`);
    let topic: string;
    try {
      ({ topic } = await publishAck(async (t, payload, opts) => {
        await withTimeout(client.publishAsync(t, payload, opts), o.timeoutMs, `the broker did not confirm within ${o.timeoutMs} ms`);
      }, alarmsCfg, structure.structureId, { alarmId: o.alarm, user: o.user, reason: o.reason }));
    } catch (err) {
      // MQTT 5 brokers answer a publish their ACL denies with reason 0x87; 3.1.1 brokers drop it (no verdict comes).
      if ((err as { code?: unknown }).code === 0x87) {
        throw new AckRefusedError(`the broker refused the command: login "${o.mqttUsername ?? o.user}" may not publish on ${ackTopic(alarmsCfg, structure.structureId, o.user)} (broker ACL)`, null);
      }
      throw new AckPublishError(`acknowledgement not published: ${err instanceof Error ? err.message : String(err)}`, err);
    }
    const v = await withTimeout(verdict, o.timeoutMs, 'no verdict').catch(() => null);
    if (v === null) {
      throw new AckRefusedError(`no verdict from the processor within ${o.timeoutMs} ms on ${verdictTopic}: is it running (strainward status)? The command stays on the broker for it.`, null);
    }
    if (v.verdict === 'refused') throw new AckRefusedError(`refused (${v.code}): ${v.reason}`, v);
    return { topic, verdict: v };
  } finally {
    await client.endAsync().catch(() => undefined);
  }
}

/** The verdict message, as the processor publishes it (checked: anyone could publish on a topic). */
const AckVerdictSchema = z.object({
  alarm_id: z.string(), user: z.string(), verdict: z.enum(['acknowledged', 'refused']),
  code: z.string().nullable(), reason: z.string(), at: z.string(),
});

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return null;
  }
}

/** `strainward ack`: acknowledge one alarm through the broker. */
export function ackCommand(): Command {
  return new Command('ack')
    .description('acknowledge an alarm: publish the command the running processor listens for')
    .requiredOption('-c, --config <file>', 'runtime configuration (YAML or JSON) naming the structure file')
    .requiredOption('--alarm <id>', 'alarm id, as printed in every alarm message')
    .requiredOption('--user <id>', 'who acknowledges: your broker login, which the broker lets publish on your own ack topic only')
    .requiredOption('--reason <text>', 'why, in words the next shift can read')
    .option('--mqtt-username <name>', 'broker login if it differs from --user (the broker must still allow that login the --user topic)')
    .option('--mqtt-password-env <var>', 'environment variable holding that user\'s broker password')
    .option('--timeout-ms <ms>', 'give up connecting or publishing after this long', '10000')
    .action(async (raw: unknown) => {
      const { verdict } = await sendAck(raw);
      process.stdout.write(`${verdict.alarm_id}: ${verdict.reason} (by ${verdict.user}, ${verdict.at})\n`);
    });
}
