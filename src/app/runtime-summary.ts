import { resolve } from 'node:path';
import { redactUrl } from '../adapters/secret.js';
import { ackSubscription } from '../alarms/ack.js';
import type { CompiledStructure } from '../config/compile.js';
import type { RuntimeConfig } from '../config/runtime-schema.js';
import { compileTopicPattern, subscriptionFilter } from '../ingest/topic.js';
import { presenceTopic } from './presence.js';
import { rezeroSubscription } from '../rezero/topics.js';

/**
 * Where a runtime file connects and writes, as plain data for `strainward validate`: the broker
 * (what it subscribes to), the database, the files. Secrets are never in a runtime file, but a URL
 * may carry a password or a token in its query: URLs are redacted, and a secret's source is named
 * (an environment variable, a file), never read. Paths are resolved against the runtime file's
 * folder, as the live job resolves them. Pure.
 */
export interface RuntimeSummary {
  broker: {
    url: string; client_id: string; protocol_version: number; username: string | null; password: string;
    tls: { ca_file: string | null; cert_file: string | null; reject_unauthorized: boolean } | null;
    subscriptions: string[]; presence_topic: string | null;
  };
  database: null | {
    url: string; org: string; bucket: string; token: string;
    spool: { dir: string; limit_bytes: number; policy: string };
  };
  sinks: {
    results: string;
    dead_letters: { file: string; mqtt_topic: string | null };
    capture: { dir: string; retention_hours: number | null } | null;
    alarm_state_file: string;
    alarm_log_file: string;
    live_page: { address: string; token: string } | null;
    /** With a `rezero` section in the structure file. */
    rezero: { overrides_file: string; audit_file: string } | null;
  };
}

const secretSource = (env: string | undefined, file: string | undefined, baseDir: string, none: string): string =>
  env !== undefined ? `environment variable ${env}` : file !== undefined ? `file ${resolve(baseDir, file)}` : none;

export function runtimeSummary(rc: RuntimeConfig, structure: CompiledStructure, baseDir: string): RuntimeSummary {
  const path = (p: string) => resolve(baseDir, p);
  const s = structure.structureId;
  const subscriptions = [subscriptionFilter(compileTopicPattern(rc.mqtt.topic_pattern), s)];
  if (structure.alarms !== null) subscriptions.push(ackSubscription(structure.alarms, s));
  if (structure.config.rezero !== undefined) subscriptions.push(rezeroSubscription(structure.config.rezero, s));
  const db = rc.database;
  const page = rc.live_page;
  return {
    broker: {
      url: redactUrl(rc.mqtt.url), client_id: rc.mqtt.client_id, protocol_version: rc.mqtt.protocol_version,
      username: rc.mqtt.username ?? null, password: secretSource(rc.mqtt.password_env, undefined, baseDir, 'none'),
      tls: rc.mqtt.tls ? {
        ca_file: rc.mqtt.tls.ca_file ? path(rc.mqtt.tls.ca_file) : null, cert_file: rc.mqtt.tls.cert_file ? path(rc.mqtt.tls.cert_file) : null,
        reject_unauthorized: rc.mqtt.tls.reject_unauthorized,
      } : null,
      subscriptions, presence_topic: presenceTopic(rc.presence.topic, s, rc.mqtt.client_id),
    },
    database: db === undefined ? null : {
      url: redactUrl(db.url), org: db.org, bucket: db.bucket, token: secretSource(db.token_env, db.token_file, baseDir, 'none (the database takes writes without one)'),
      spool: { dir: path(db.spool.dir), limit_bytes: db.spool.limit_bytes, policy: db.spool.policy },
    },
    sinks: {
      results: db === undefined ? `line-protocol files in ${path(rc.line_protocol.dir)}` : `the database ${redactUrl(db.url)} (bucket ${db.bucket}), spooled in ${path(db.spool.dir)} while it is unreachable`,
      dead_letters: { file: path(rc.dead_letters.file), mqtt_topic: rc.dead_letters.mqtt_topic === '' ? null : rc.dead_letters.mqtt_topic.replaceAll('{structure}', s) },
      capture: rc.capture ? { dir: path(rc.capture.dir), retention_hours: rc.capture.retention_hours ?? null } : null,
      alarm_state_file: path(rc.alarms.state_file),
      alarm_log_file: path(rc.alarms.log_file),
      live_page: page === undefined ? null : {
        address: `http://${page.host}:${page.port}/`, token: secretSource(page.token_env, page.token_file, baseDir, 'none (loopback only)'),
      },
      rezero: structure.config.rezero === undefined ? null : { overrides_file: path(rc.rezero.overrides_file), audit_file: path(rc.rezero.audit_file) },
    },
  };
}

/** The summary as lines a person reads. Pure. */
export function runtimeSummaryLines(r: RuntimeSummary): string[] {
  const b = r.broker;
  const out = [
    `broker: ${b.url} as client ${b.client_id} (MQTT ${b.protocol_version === 5 ? '5' : '3.1.1'}), login ${b.username ?? 'none'}, password ${b.password}`,
    ...(b.tls ? [`  TLS: CA ${b.tls.ca_file ?? 'system'}, client certificate ${b.tls.cert_file ?? 'none'}${b.tls.reject_unauthorized ? '' : ', ANY BROKER CERTIFICATE ACCEPTED (bench only)'}`] : []),
    `  subscribes to: ${b.subscriptions.join(', ')}`,
    `  presence: ${b.presence_topic ?? 'none (nobody will see the processor fall silent)'}`,
  ];
  const d = r.database;
  out.push(d === null ? 'database: none' : `database: ${d.url}, org ${d.org}, bucket ${d.bucket}, token from ${d.token}; spool ${d.spool.dir} (at most ${d.spool.limit_bytes} bytes, ${d.spool.policy} when full)`);
  const s = r.sinks;
  out.push(
    `results: ${s.results}`,
    `dead letters: ${s.dead_letters.file}${s.dead_letters.mqtt_topic === null ? '' : `, copies on ${s.dead_letters.mqtt_topic}`}`,
    `capture: ${s.capture === null ? 'none (nothing to replay later)' : `${s.capture.dir}${s.capture.retention_hours === null ? '' : `, kept ${s.capture.retention_hours} h`}`}`,
    `alarm state: ${s.alarm_state_file}; alarm log: ${s.alarm_log_file}`,
    `live page: ${s.live_page === null ? 'none' : `${s.live_page.address}, token from ${s.live_page.token}`}`,
    ...(s.rezero === null ? [] : [`zero overrides: ${s.rezero.overrides_file}; rezero audit: ${s.rezero.audit_file}`]),
  );
  return out;
}
