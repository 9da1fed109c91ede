import { Command } from 'commander';
import { z } from 'zod';
import { brokerAccess } from '../../app/broker-access.js';
import { assessPresence, presenceTopic, type PresenceAssessment } from '../../app/presence.js';
import { alarmsTable } from '../../app/state-topics/alarms-table.js';
import { OpenAlarmsStateSchema, type OpenAlarmsState } from '../../app/state-topics/open-alarms.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { problemsFromZod } from '../../validation/issues.js';
import { connectToRead } from '../broker-client.js';
import { SilentProcessorError, UsageError } from '../errors.js';
import { parseOptions } from '../options.js';

export const AlarmsOptionsSchema = z.strictObject({
  config: z.string().min(1),
  /** The longest to wait for the retained list and the processor's status. */
  waitMs: z.coerce.number().int().positive().default(2_000),
  json: z.boolean().default(false),
  mqttUsername: z.string().min(1).optional(),
  mqttPasswordEnv: z.string().min(1).optional(),
});

/** What `strainward alarms` found: the list and the standing of the processor that keeps it. */
export interface AlarmsReading {
  list: OpenAlarmsState;
  /** Null when presence is switched off (nothing to judge the list's freshness by). */
  processor: PresenceAssessment | null;
}

/**
 * Reads the retained list of open alarms (`state_topics.alarms_topic`) and the presence of the
 * processor that published it, prints the list (a table, or `--json`), and fails with exit 4 when
 * no list is retained or it is unreadable, or when that processor is not online (then the list is
 * printed all the same, but it may be out of date: a silent processor raises and clears nothing).
 */
export async function readOpenAlarms(raw: unknown, out: (line: string) => void, env: NodeJS.ProcessEnv = process.env): Promise<AlarmsReading> {
  const o = parseOptions(AlarmsOptionsSchema, raw);
  const { runtime: rc, structure, baseDir } = await loadRuntimeFile(o.config);
  const s = structure.structureId;
  if (rc.state_topics.alarms_topic === '') throw new UsageError(`${o.config}: state_topics.alarms_topic is empty, so the processor keeps no list on the broker`);
  if (structure.alarms === null) throw new UsageError(`${o.config}: the structure file has no alarms section, so there is no list of alarms`);
  const alarmsTopic = rc.state_topics.alarms_topic.replaceAll('{structure}', s);
  const presenceFilter = presenceTopic(rc.presence.topic, s, '+');
  const access = brokerAccess(rc, baseDir, env);
  if (o.mqttUsername !== undefined) {
    access.username = o.mqttUsername;
    access.password = o.mqttPasswordEnv ? env[o.mqttPasswordEnv] : undefined;
  }
  const client = await connectToRead(access, {
    clientIdPrefix: `${rc.mqtt.client_id}-alarms`, protocolVersion: rc.mqtt.protocol_version, timeoutMs: o.waitMs * 5, configFile: o.config,
  });
  let listPayload: Uint8Array | null = null;
  const presence = new Map<string, Uint8Array>();
  try {
    // Retained messages come at once after subscribing; stop early once the list and its processor's status are in.
    await new Promise<void>((resolveWait, rejectWait) => {
      const timer = setTimeout(resolveWait, o.waitMs);
      const maybeDone = (): void => {
        if (listPayload === null) return;
        const who = processorOf(listPayload);
        const topic = who === null || presenceFilter === null ? null : presenceTopic(rc.presence.topic, s, who);
        if (presenceFilter === null || (topic !== null && presence.has(topic))) { clearTimeout(timer); resolveWait(); }
      };
      client.on('message', (topic, payload) => {
        if (topic === alarmsTopic) listPayload = new Uint8Array(payload);
        else presence.set(topic, new Uint8Array(payload));
        maybeDone();
      });
      client.subscribeAsync([alarmsTopic, ...(presenceFilter === null ? [] : [presenceFilter])], { qos: 1 })
        .catch((err: unknown) => { clearTimeout(timer); rejectWait(err); });
    });
  } finally {
    await client.endAsync().catch(() => undefined);
  }
  if (listPayload === null) {
    throw new SilentProcessorError(`no list of open alarms is retained on ${alarmsTopic}: no processor of ${s} has published one (is one running? strainward status)`);
  }
  const parsed = OpenAlarmsStateSchema.safeParse(safeJson(listPayload));
  if (!parsed.success) {
    throw new SilentProcessorError(`the list on ${alarmsTopic} is unreadable (${problemsFromZod(parsed.error).map((p) => `${p.path}: ${p.reason}`).join('; ')})`);
  }
  const list = parsed.data;
  const now = Date.now();
  const topic = presenceFilter === null ? null : presenceTopic(rc.presence.topic, s, list.processor)!;
  const payload = topic === null ? undefined : presence.get(topic);
  const processor = topic === null ? null
    : payload === undefined
      ? { topic, processor: list.processor, state: 'unreadable' as const, age_s: Number.NaN, healthy: false, reason: `no status on ${topic}`, warnings: [], message: null }
      : assessPresence([{ topic, payload }], now)[0];
  const age_s = (now - Date.parse(list.at)) / 1000;
  if (o.json) {
    out(JSON.stringify({
      ...list, age_s,
      processor_status: processor === null ? null : { state: processor.state, healthy: processor.healthy, reason: processor.reason, age_s: Number.isFinite(processor.age_s) ? processor.age_s : null },
    }));
  } else {
    const standing = processor === null ? 'presence is off: cannot tell whether it is current'
      : processor.healthy ? `${list.processor} online` : `${list.processor} NOT HEALTHY: ${processor.reason}`;
    const cut = list.listed < list.count ? `; only the ${list.listed} most severe listed (state_topics.max_message_bytes)` : '';
    out(`open alarms of ${list.structure}: ${list.count} (list of ${list.at}, ${age_s.toFixed(1)} s ago; ${standing}${cut})`);
    if (list.alarms.length > 0) for (const line of alarmsTable(list.alarms)) out(line);
  }
  if (processor !== null && !processor.healthy) {
    throw new SilentProcessorError(`the list is as of ${list.at} and may be out of date: ${list.processor}: ${processor.reason}`);
  }
  return { list, processor };
}

function safeJson(payload: Uint8Array): unknown {
  try {
    return JSON.parse(new TextDecoder().decode(payload));
  } catch {
    return undefined;
  }
}

function processorOf(payload: Uint8Array): string | null {
  const p = (safeJson(payload) as { processor?: unknown } | undefined)?.processor;
  return typeof p === 'string' && p !== '' ? p : null;
}

/** `strainward alarms`: the open alarms, as the processor keeps them retained on the broker. */
export function alarmsCommand(): Command {
  return new Command('alarms')
    .description('list the open alarms from the broker\'s retained list (exit 4 when none is retained or its processor is silent, 9 when the broker cannot be reached)')
    .requiredOption('-c, --config <file>', 'runtime configuration (YAML or JSON)')
    .option('--wait-ms <ms>', 'the longest to wait for the retained list and the processor\'s status', '2000')
    .option('--json', 'one JSON object (the retained list, its age and the processor\'s standing) instead of a table')
    .option('--mqtt-username <name>', 'broker login to read with, e.g. a read-only viewer (default: the runtime file\'s)')
    .option('--mqtt-password-env <var>', 'environment variable holding that login\'s broker password')
    .action(async (raw: unknown) => { await readOpenAlarms(raw, (line) => process.stdout.write(`${line}\n`)); });
}
