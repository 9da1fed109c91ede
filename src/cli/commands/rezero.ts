import { randomUUID } from 'node:crypto';
import { Command } from 'commander';
import type { MqttClient } from 'mqtt';
import { z } from 'zod';
import { AckUserSchema } from '../../alarms/ack.js';
import { connectOneShot } from '../../adapters/mqtt/one-shot-client.js';
import { brokerAccess } from '../../app/broker-access.js';
import { ConfigError } from '../../config/compile.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { RezeroCommandSchema, RezeroVerdictSchema, type RezeroVerdict } from '../../rezero/schema.js';
import { rezeroTopic, rezeroVerdictTopic } from '../../rezero/topics.js';
import { RezeroRefusedError, UsageError } from '../errors.js';
import { parseOptions } from '../options.js';
import { withTimeout } from '../../app/time-bound.js';

/** Options of `strainward rezero`; group, user and reason obey the request payload's own limits. */
export const RezeroOptionsSchema = z.strictObject({
  config: z.string().min(1),
  group: RezeroCommandSchema.shape.group_id,
  user: AckUserSchema,
  reason: RezeroCommandSchema.shape.reason,
  /** Broker login (default: the --user name, which the broker's ACL ties to its rezero topic). */
  mqttUsername: z.string().min(1).optional(),
  mqttPasswordEnv: z.string().min(1).optional(),
  timeoutMs: z.coerce.number().int().positive().default(10_000),
  json: z.boolean().default(false),
});

/**
 * Asks the running processor to take the group's current readings as its new zero: one request
 * (QoS 1) on the user's own request topic with a client of its own, then the verdict awaited on the
 * user's verdict topic (subscribed first), told from other requests by a request id. Resolves with
 * an accepted verdict; throws RezeroRefusedError (exit 5) when refused or unanswered within
 * `timeoutMs`, an Error when the broker cannot be reached.
 */
export async function sendRezero(raw: unknown, env: NodeJS.ProcessEnv = process.env): Promise<RezeroVerdict> {
  const o = parseOptions(RezeroOptionsSchema, raw);
  const { runtime: rc, structure, baseDir } = await loadRuntimeFile(o.config);
  const cfg = structure.config.rezero;
  if (cfg === undefined) throw new ConfigError(o.config, [{ path: 'rezero', reason: 'the structure file has no rezero section: nobody may rezero, and the processor does not listen for it' }]);
  if (!structure.groupsById.has(o.group)) throw new UsageError(`--group: no group "${o.group}" in ${structure.structureId} (groups: ${[...structure.groupsById.keys()].join(', ')})`);
  const s = structure.structureId;
  const passwordEnv = o.mqttPasswordEnv ?? rc.mqtt.password_env;
  const login = o.mqttUsername ?? o.user;
  let client: MqttClient;
  try {
    const access = { ...brokerAccess(rc, baseDir, env), username: login, password: passwordEnv ? env[passwordEnv] : undefined };
    client = await connectOneShot(access, { clientIdPrefix: `${rc.mqtt.client_id}-rezero`, protocolVersion: rc.mqtt.protocol_version, timeoutMs: o.timeoutMs });
  } catch (err) {
    throw new Error(`cannot connect to ${rc.mqtt.url}: ${err instanceof Error ? err.message : String(err)}`, { cause: err });
  }
  try {
    const requestId = randomUUID();
    const verdictTopic = rezeroVerdictTopic(cfg, s, o.user);
    const verdict = new Promise<RezeroVerdict>((resolveVerdict) => {
      client.on('message', (topic, payload) => {
        if (topic !== verdictTopic) return;
        let json: unknown = null;
        try { json = JSON.parse(payload.toString('utf8')); } catch { /* not ours */ }
        const parsed = RezeroVerdictSchema.safeParse(json);
        if (parsed.success && parsed.data.request_id === requestId) resolveVerdict(parsed.data);
      });
    });
    await withTimeout(client.subscribeAsync(verdictTopic, { qos: 1 }), o.timeoutMs, `the broker did not confirm the verdict subscription within ${o.timeoutMs} ms`);
    const topic = rezeroTopic(cfg, s, o.user);
    try {
      await withTimeout(client.publishAsync(topic, JSON.stringify({ group_id: o.group, user: o.user, reason: o.reason, request_id: requestId }), { qos: 1, retain: false }),
        o.timeoutMs, `the broker did not confirm within ${o.timeoutMs} ms`);
    } catch (err) {
      // MQTT 5 brokers answer a publish their ACL denies with reason 0x87; 3.1.1 brokers drop it (no verdict comes).
      if ((err as { code?: unknown }).code === 0x87) throw new RezeroRefusedError(`the broker refused the request: login "${login}" may not publish on ${topic} (broker ACL)`);
      throw new Error(`rezero request not published: ${err instanceof Error ? err.message : String(err)}`, { cause: err });
    }
    const v = await withTimeout(verdict, o.timeoutMs, 'no verdict').catch(() => null);
    if (v === null) throw new RezeroRefusedError(`no verdict from the processor within ${o.timeoutMs} ms on ${verdictTopic}: is it running (strainward status)? The request stays on the broker for it.`);
    if (v.verdict === 'refused') throw new RezeroRefusedError(`refused (${v.code}): ${v.reason}`);
    return v;
  } finally {
    await client.endAsync().catch(() => undefined);
  }
}

/** An accepted verdict as lines: the readings taken, each channel's zero before and after. */
export function rezeroLines(v: RezeroVerdict): string[] {
  const r = v.record!;
  return [
    `${r.group_id}: ${v.reason} (by ${r.user}, ${r.at})`,
    ...[...r.elements, ...(r.companion === null ? [] : [r.companion])].map((c) => `  ${c.gauge} on ${c.channel}: zero ${c.old_zero} -> ${c.new_zero} ${c.unit}`),
    `  zero-reading temperature: ${r.zero_temperature_degC.old} -> ${r.zero_temperature_degC.new} degC`,
  ];
}

/** `strainward rezero`: take a group's current readings as its new zero, through the broker. */
export function rezeroCommand(): Command {
  return new Command('rezero')
    .description('take a group\'s current readings as its new zero: the running processor decides, applies, keeps an audit record and answers')
    .requiredOption('-c, --config <file>', 'runtime configuration (YAML or JSON) naming the structure file')
    .requiredOption('--group <id>', 'the gauge group to rezero')
    .requiredOption('--user <id>', 'who asks: your broker login, which the broker lets publish on your own rezero topic only')
    .requiredOption('--reason <text>', 'why, for the audit record (a replaced gauge, a repair, a new reference state)')
    .option('--mqtt-username <name>', 'broker login if it differs from --user (the broker must still allow that login the --user topic)')
    .option('--mqtt-password-env <var>', 'environment variable holding that user\'s broker password')
    .option('--timeout-ms <ms>', 'give up connecting, publishing or waiting for the verdict after this long', '10000')
    .option('--json', 'print the verdict as one JSON object')
    .action(async (raw: unknown) => {
      const v = await sendRezero(raw);
      process.stdout.write(`${(raw as { json?: boolean }).json === true ? JSON.stringify(v) : rezeroLines(v).join('\n')}\n`);
      if (!v.persisted) throw new Error(`the new zero of ${v.group_id} is in effect but was not persisted by the processor: a restart would lose it (see its log)`);
    });
}
