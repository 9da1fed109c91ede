import { Command } from 'commander';
import { z } from 'zod';
import { brokerAccess } from '../../app/broker-access.js';
import { assessPresence, presenceTopic, type PresenceAssessment } from '../../app/presence.js';
import { statusDetailLines, statusDetails } from '../../app/status-details.js';
import { connectToRead } from '../broker-client.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { SilentProcessorError, UsageError } from '../errors.js';
import { parseOptions } from '../options.js';
import { checkClusterStatus } from '../cluster-status.js';

export const StatusOptionsSchema = z.strictObject({
  config: z.string().min(1).optional(),
  /** A cluster file: list every work unit and its holder instead (src/cluster). */
  cluster: z.string().min(1).optional(),
  /** How long to collect the broker's retained status messages. */
  waitMs: z.coerce.number().int().positive().default(2_000),
  json: z.boolean().default(false),
  /** Broker login of a read-only viewer (default: the runtime file's user). */
  mqttUsername: z.string().min(1).optional(),
  /** Environment variable holding that login's broker password. */
  mqttPasswordEnv: z.string().min(1).optional(),
}).refine((o) => (o.config === undefined) !== (o.cluster === undefined), { message: 'give either --config or --cluster', path: ['config'] });

/**
 * Reads the retained presence messages of the structure's processors from the broker, prints each
 * one's standing and what it reports (database, spool, dead letters, open alarms, component
 * faults), and fails (exit 4) when none is there or any is offline, stopped, stale or unreadable: a
 * check for a watchdog or the control room, since a silent processor raises no alarm. A broker
 * that cannot be reached is exit 9, never taken for a silent processor.
 */
export async function checkStatus(raw: unknown, out: (line: string) => void, env: NodeJS.ProcessEnv = process.env): Promise<PresenceAssessment[]> {
  const o = parseOptions(StatusOptionsSchema, raw);
  const { runtime: rc, structure, baseDir } = await loadRuntimeFile(o.config!);
  const filter = presenceTopic(rc.presence.topic, structure.structureId, '+');
  if (filter === null) throw new UsageError(`${o.config}: presence.topic is empty, so processors publish no status to check`);
  const access = brokerAccess(rc, baseDir, env);
  if (o.mqttUsername !== undefined) {
    access.username = o.mqttUsername;
    access.password = o.mqttPasswordEnv ? env[o.mqttPasswordEnv] : undefined;
  }
  const client = await connectToRead(access, {
    clientIdPrefix: `${rc.mqtt.client_id}-status`, protocolVersion: rc.mqtt.protocol_version, timeoutMs: o.waitMs * 5, configFile: o.config!,
  });
  const received = new Map<string, Uint8Array>(); // the latest per topic
  try {
    client.on('message', (topic, payload) => { received.set(topic, new Uint8Array(payload)); });
    await client.subscribeAsync(filter, { qos: 1 });
    await new Promise((r) => setTimeout(r, o.waitMs));
  } finally {
    await client.endAsync().catch(() => undefined);
  }
  const assessed = assessPresence([...received].map(([topic, payload]) => ({ topic, payload })), Date.now())
    .sort((a, b) => a.processor.localeCompare(b.processor));
  if (o.json) {
    out(JSON.stringify({
      structure: structure.structureId,
      processors: assessed.map(({ message, ...a }) => ({ ...a, age_s: Number.isFinite(a.age_s) ? a.age_s : null, details: statusDetails(message) })),
    }));
  } else {
    for (const a of assessed) {
      const age = Number.isFinite(a.age_s) ? `${a.age_s.toFixed(1)} s ago` : '';
      out(`${a.processor}  ${a.state}  ${age}${a.healthy ? '' : `  NOT HEALTHY: ${a.reason}`}`);
      for (const w of a.warnings) out(`${a.processor}  WARNING: ${w}`);
      const details = statusDetails(a.message);
      if (details !== null) for (const line of statusDetailLines(details)) out(line);
    }
    if (assessed.length === 0) out(`no processor status on ${filter}`);
  }
  const bad = assessed.filter((a) => !a.healthy);
  if (assessed.length === 0 || bad.length > 0) {
    throw new SilentProcessorError(assessed.length === 0
      ? `no processor of ${structure.structureId} has published a status on ${filter}: nothing may be computing`
      : bad.map((a) => `${a.processor}: ${a.reason}`).join('; '));
  }
  return assessed;
}

/** `strainward status`: is a processor computing this structure right now? */
export function statusCommand(): Command {
  return new Command('status')
    .description('check on the broker that the structure\'s processors are online and recent (exit 4 when not, 9 when the broker cannot be reached), with their database, spool, dead letters, open alarms and component faults')
    .option('-c, --config <file>', 'runtime configuration (YAML or JSON)')
    .option('--cluster <file>', 'a cluster file: list every work unit, its holder and since when (exit 4 when one has none)')
    .option('--wait-ms <ms>', 'how long to collect the retained status messages', '2000')
    .option('--json', 'one JSON object instead of lines')
    .option('--mqtt-username <name>', 'broker login to read with, e.g. a read-only viewer (default: the runtime file\'s)')
    .option('--mqtt-password-env <var>', 'environment variable holding that login\'s broker password')
    .action(async (raw: unknown) => {
      const print = (line: string) => process.stdout.write(`${line}\n`);
      const o = parseOptions(StatusOptionsSchema, raw);
      if (o.cluster !== undefined) await checkClusterStatus(o.cluster, o, print);
      else await checkStatus(raw, print);
    });
}
