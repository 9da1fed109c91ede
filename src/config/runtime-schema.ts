import { z } from 'zod';
import { parseListenAddress } from './listen-address.js';

/**
 * Deployment settings of one processor (where the broker, database and files are), kept apart
 * from the structure description. Secrets never live here: the database token comes from an
 * environment variable or a secret file named here, the MQTT password likewise.
 */
const duration_ms = z.number().int().positive();

export const RuntimeConfigSchema = z.strictObject({
  schema_version: z.literal(1),
  /** Structure file, relative to this file. */
  structure: z.string().min(1),
  mqtt: z.strictObject({
    url: z.string().min(1),
    /**
     * A clustered broker: every node's address (`mqtt://host:port`); the client tries them in turn
     * and moves to another when its node goes. `url` is used for the protocol and TLS.
     */
    servers: z.array(z.string().regex(/^(mqtts?|tcp|ssl|tls):\/\/[^/]+$/, 'expected mqtt://host:port')).min(1).optional(),
    /** How long one connection attempt may take; a clustered broker moving its sessions after a node loss needs 10 s or more. */
    connect_timeout_ms: duration_ms.default(10_000),
    client_id: z.string().min(1),
    /** Preferred protocol: 5, or 4 (MQTT 3.1.1, e.g. for brokers that refuse 5). */
    protocol_version: z.union([z.literal(5), z.literal(4)]).default(5),
    fallback_to_v311: z.boolean().default(true),
    username: z.string().min(1).optional(),
    password_env: z.string().min(1).optional(),
    /** With an `mqtts://` url: PEM files, relative to this file. The CA verifies the broker; a client certificate and key prove who we are. */
    tls: z.strictObject({
      ca_file: z.string().min(1).optional(),
      cert_file: z.string().min(1).optional(),
      key_file: z.string().min(1).optional(),
      /** false accepts any broker certificate: for a bench only, never on a structure. */
      reject_unauthorized: z.boolean().default(true),
    }).refine((t) => (t.cert_file === undefined) === (t.key_file === undefined), 'cert_file and key_file go together').optional(),
    topic_pattern: z.string().default('strainward/{structure}/{logger}/scan'),
    keepalive_s: z.number().int().min(0).default(30),
    session_expiry_s: z.number().int().min(0).default(86_400),
    reconnect_initial_ms: duration_ms.default(500),
    reconnect_max_ms: duration_ms.default(30_000),
    /**
     * Most messages held unacknowledged: the window the broker is asked for (MQTT 5 Receive Maximum;
     * with 3.1.1 set the broker's in-flight limit to at most this). At it, intake pauses unless an
     * answer of the broker is awaited; messages beyond it are counted and warned about.
     */
    max_held_acks: z.number().int().min(2).max(65_535).default(4096),
  }),
  /**
   * The processor's own status on the broker (retained): `online` every `every_s`, `stopped` on an
   * orderly stop, `offline` as the last will when it vanishes. `{structure}` and `{client_id}` are
   * replaced; empty topic: none of it (not advised: then nobody sees the processor go silent).
   */
  presence: z.strictObject({
    topic: z.string().default('strainward/{structure}/processor/{client_id}'),
    every_s: z.number().positive().default(10),
  }).default({ topic: 'strainward/{structure}/processor/{client_id}', every_s: 10 }),
  /**
   * The current state for any MQTT client, retained: each group's latest result every `interval_s`
   * (only groups with a newer result), and the list of open alarms on every transition.
   * `{structure}` (and `{group}`) are replaced; an empty topic switches that part off.
   */
  state_topics: z.strictObject({
    interval_s: z.number().min(0.1).default(5),
    groups_topic: z.string().default('strainward/{structure}/state/groups/{group}')
      .refine((t) => t === '' || t.includes('{group}'), 'must contain {group} (one retained topic per group), or be empty'),
    alarms_topic: z.string().default('strainward/{structure}/state/alarms'),
    /** Largest open-alarm list (JSON bytes; about 700 an alarm): keep it under the broker's max_packet_size. Beyond it the least severe are left out. */
    max_message_bytes: z.number().int().min(4096).max(268_435_000).default(200_000),
  }).default({ interval_s: 5, groups_topic: 'strainward/{structure}/state/groups/{group}', alarms_topic: 'strainward/{structure}/state/alarms', max_message_bytes: 200_000 }),
  /** What is written with every result, to the database or the files. */
  results: z.strictObject({
    /** Each element's mechanical strain (`el_<gauge>_micro`); a replay of the raw archive gives them later too. */
    element_strains: z.boolean().default(false),
  }).default({ element_strains: false }),
  /**
   * The storage stage's state (open summary intervals, event windows), rewritten before messages are
   * acknowledged so a restart continues the intervals without counting a message twice.
   */
  storage_state_file: z.string().min(1).default('var/storage-state.json'),
  /** Absent: results go to rotating line-protocol files (the embedded default). */
  database: z.strictObject({
    url: z.string().url(),
    org: z.string().min(1),
    bucket: z.string().min(1),
    token_env: z.string().min(1).optional(),
    token_file: z.string().min(1).optional(),
    batch_size: z.number().int().positive().default(5000),
    flush_interval_ms: duration_ms.default(50),
    /**
     * Batches written at once. Four: the server parses requests side by side on its cores, and the
     * database alone took 12,469 scans/s with four against about 6,000 with two (bench:pipeline).
     */
    max_in_flight: z.number().int().min(1).max(16).default(4),
    timeout_ms: duration_ms.default(10_000),
    /** auto: gzip unless the database is on this machine (loopback), where it costs CPU and saves nothing. */
    gzip: z.enum(['auto', 'always', 'never']).default('auto'),
    gzip_threshold_bytes: z.number().int().min(0).default(1000),
    max_retries: z.number().int().min(0).default(3),
    min_retry_delay_ms: duration_ms.default(200),
    max_retry_delay_ms: duration_ms.default(10_000),
    spool: z.strictObject({
      dir: z.string().min(1),
      limit_bytes: z.number().int().positive().default(1024 ** 3),
      /** block: stop acknowledging (the broker keeps messages); drop_oldest: delete the oldest spooled data, counted. */
      policy: z.enum(['block', 'drop_oldest']).default('block'),
      high_water_ratio: z.number().gt(0).lt(1).default(0.8),
    }),
  }).optional(),
  line_protocol: z.strictObject({
    dir: z.string().min(1),
    max_file_bytes: z.number().int().positive().default(64 * 1024 ** 2),
    max_file_age_s: z.number().positive().default(3600),
  }).default({ dir: 'var/lp', max_file_bytes: 64 * 1024 ** 2, max_file_age_s: 3600 }),
  dead_letters: z.strictObject({
    file: z.string().min(1),
    /** `{structure}` is replaced; empty string: no MQTT copy. */
    mqtt_topic: z.string().default('strainward/{structure}/deadletter'),
    /** Largest MQTT packet of a copy (reasons, size, SHA-256, excerpt; the whole original is in the file): at most the broker's max_packet_size. */
    mqtt_max_packet_bytes: z.number().int().min(4096).max(268_435_455).default(16_384),
  }).default({ file: 'var/deadletters.ndjson', mqtt_topic: 'strainward/{structure}/deadletter', mqtt_max_packet_bytes: 16_384 }),
  /** Raw capture of everything received, for replay. Absent: no capture. */
  capture: z.strictObject({
    dir: z.string().min(1),
    rotate_bytes: z.number().int().positive().default(64 * 1024 ** 2),
    rotate_every_s: z.number().positive().default(3600),
    /**
     * The longest a message waits for its capture batch to be written and synced; it is
     * acknowledged only after that (and after its results are durable). One batch per interval.
     */
    flush_every_ms: duration_ms.default(50),
    retention_hours: z.number().positive().optional(),
    retention_bytes: z.number().int().positive().optional(),
  }).optional(),
  alarms: z.strictObject({
    state_file: z.string().min(1),
    log_file: z.string().min(1),
  }).default({ state_file: 'var/alarm-state.json', log_file: 'var/alarms.ndjson' }),
  /** Where the fatigue counts of the structure's `fatigue` section are kept between runs (rewritten atomically every `write_interval_s` and at stop). */
  fatigue: z.strictObject({
    state_file: z.string().min(1),
  }).default({ state_file: 'var/fatigue-state.json' }),
  /**
   * Rezero (only with a `rezero` section in the structure file): the zero overrides in effect,
   * restored at start, and the audit file every accepted rezero is appended to (replay reads it).
   */
  rezero: z.strictObject({
    overrides_file: z.string().min(1),
    audit_file: z.string().min(1),
  }).default({ overrides_file: 'var/zero-overrides.json', audit_file: 'var/rezero-audit.ndjson' }),
  /**
   * The live page served by the processor (absent: none). Beyond loopback it needs a token, read from
   * the environment variable `token_env` or the file `token_file` (relative to this file), never from here.
   */
  live_page: z.strictObject({
    host: z.string().min(1).default('127.0.0.1'),
    /** 0: any free port (the address is printed and logged). */
    port: z.number().int().min(0).max(65535).default(8480),
    token_env: z.string().min(1).optional(),
    token_file: z.string().min(1).optional(),
    /** Length of each group's trend, seconds. */
    trend_s: z.number().int().min(10).max(3600).default(300),
    /** How often open pages are updated. */
    push_every_ms: duration_ms.min(100).default(1000),
    /** A line shown on top of the page, e.g. that the data is simulated. */
    notice: z.string().min(1).max(500).optional(),
  }).optional(),
  /**
   * The processor's own health as a Prometheus text endpoint, `GET /metrics` (absent: none). Beyond
   * loopback it needs a token, as the live page does: `token_env` or `token_file`, never here.
   */
  metrics: z.strictObject({
    listen: z.string().refine((t) => parseListenAddress(t) !== null, {
      error: (issue) => `expected host:port, e.g. 127.0.0.1:9464 ([::1]:9464 for IPv6; port 0: any free port), received "${String(issue.input)}"`,
    }).default('127.0.0.1:9464'),
    token_env: z.string().min(1).optional(),
    token_file: z.string().min(1).optional(),
  }).optional(),
  /** What the decoder accepts from loggers. */
  ingest: z.strictObject({
    /**
     * A logger timestamp more than this ahead of the message's arrival (the processor's clock; in a
     * replay the arrival recorded in the capture) is refused (dead letter `future_timestamp`) and
     * raises the logger's clock_offset alarm. Keep it above the alarm's `ahead_s`.
     */
    max_future_s: z.number().finite().min(0).default(5),
  }).default({ max_future_s: 5 }),
  /** Pipeline clock tick: drives waits, no-data detection and escalation. */
  tick_ms: duration_ms.default(1000),
});

export type RuntimeConfig = z.infer<typeof RuntimeConfigSchema>;
