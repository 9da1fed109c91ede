import { Command } from 'commander';
import type { MqttClient } from 'mqtt';
import { z } from 'zod';
import { AckCommandSchema, publishAck } from '../../alarms/index.js';
import { ConfigError } from '../../config/compile.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { parseOptions } from '../options.js';
import { connectOneShot } from '../../adapters/mqtt/one-shot-client.js';
import { brokerAccess } from '../../app/broker-access.js';

/** Options of `strainward ack`; the alarm, user and reason obey the command payload's own limits. */
export const AckOptionsSchema = z.strictObject({
  config: z.string().min(1),
  alarm: AckCommandSchema.shape.alarm_id,
  user: AckCommandSchema.shape.user,
  reason: AckCommandSchema.shape.reason,
  /** Broker user of the acknowledgement role (default: the runtime file's user). */
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
 * Publishes one acknowledgement command (QoS 1) to the structure's command topic, with a client of
 * its own (a fresh client id, clean session: never the processor's). Resolves with the topic and
 * payload once the broker has it; the processor's verdict then appears as an `acknowledged`
 * message, or as a refusal in the alarm log.
 */
export async function sendAck(raw: unknown, env: NodeJS.ProcessEnv = process.env): Promise<{ topic: string; payload: string }> {
  const o = parseOptions(AckOptionsSchema, raw);
  const { runtime: rc, structure, baseDir } = await loadRuntimeFile(o.config);
  if (structure.alarms === null) throw new ConfigError(o.config, [{ path: 'alarms', reason: 'the structure file has no alarms section: there is nothing to acknowledge' }]);
  const passwordEnv = o.mqttPasswordEnv ?? rc.mqtt.password_env;
  let client: MqttClient;
  try {
    // The acknowledgement role may log in as a user of its own.
    const access = { ...brokerAccess(rc, baseDir, env), username: o.mqttUsername ?? rc.mqtt.username, password: passwordEnv ? env[passwordEnv] : undefined };
    client = await connectOneShot(access, { clientIdPrefix: `${rc.mqtt.client_id}-ack`, protocolVersion: rc.mqtt.protocol_version, timeoutMs: o.timeoutMs });
  } catch (err) {
    throw new AckPublishError(`cannot connect to ${rc.mqtt.url}: ${err instanceof Error ? err.message : String(err)}`, err);
  }
  try {
    return await publishAck(async (topic, payload, opts) => {
      await withTimeout(client.publishAsync(topic, payload, opts), o.timeoutMs, `the broker did not confirm within ${o.timeoutMs} ms`);
    }, structure.alarms, structure.structureId, { alarmId: o.alarm, user: o.user, reason: o.reason });
  } catch (err) {
    throw new AckPublishError(`acknowledgement not published: ${err instanceof Error ? err.message : String(err)}`, err);
  } finally {
    await client.endAsync().catch(() => undefined);
  }
}

function withTimeout<T>(p: Promise<T>, ms: number, message: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  return Promise.race([p, new Promise<never>((_, reject) => { timer = setTimeout(() => reject(new Error(message)), ms); })])
    .finally(() => clearTimeout(timer));
}

/** `strainward ack`: acknowledge one alarm through the broker. */
export function ackCommand(): Command {
  return new Command('ack')
    .description('acknowledge an alarm: publish the command the running processor listens for')
    .requiredOption('-c, --config <file>', 'runtime configuration (YAML or JSON) naming the structure file')
    .requiredOption('--alarm <id>', 'alarm id, as printed in every alarm message')
    .requiredOption('--user <id>', 'who acknowledges (must be allowed for the alarm class)')
    .requiredOption('--reason <text>', 'why, in words the next shift can read')
    .option('--mqtt-username <name>', 'broker user of the acknowledgement role (default: the runtime file\'s)')
    .option('--mqtt-password-env <var>', 'environment variable holding that user\'s broker password')
    .option('--timeout-ms <ms>', 'give up connecting or publishing after this long', '10000')
    .action(async (raw: unknown) => {
      const sent = await sendAck(raw);
      process.stdout.write(`acknowledgement of ${JSON.parse(sent.payload).alarm_id} published to ${sent.topic}; watch the alarm topic for the verdict\n`);
    });
}
