import { readFileSync } from 'node:fs';
import mqtt, { type IClientOptions, type MqttClient } from 'mqtt';
import { Observable, Subject } from 'rxjs';
import type { RawMessage } from '../../model/raw-message.js';
import { holdPubacks, type IntakeWindowStats } from './intake-window.js';
import { BrokerLoginRefusedError, loginRefusal } from './login-refused.js';
import { mqttConnectionOptionsSchema, nextReconnectDelay_ms, serverList, type MqttConnectionOptions, type MqttConnectionOptionsInput } from './options.js';

/** A received message and its acknowledgement: call `ack()` once the message is safely handled. */
export interface InboundMessage {
  raw: RawMessage;
  /** Release this message's PUBACK (in arrival order). Idempotent; a no-op for QoS 0 and after a reconnect. */
  ack(): void;
}

export interface PublishOptions {
  qos: 0 | 1 | 2;
  retain: boolean;
}

/** Publish a payload; resolves when the broker has it (PUBACK for QoS 1) or, for QoS 0, when written. */
export type Publish = (topic: string, payload: string | Uint8Array, options?: Partial<PublishOptions>) => Promise<void>;

export interface MqttConnectionStats extends IntakeWindowStats {
  connects: number;
  reconnectAttempts: number;
  /** Messages received whose PUBACK is still held. */
  heldAcks: number;
  /** Current reconnect delay, ms. */
  reconnectDelay_ms: number;
}

export interface MqttConnection {
  /** Hot stream of inbound messages; messages arriving before the first subscriber are kept for it. */
  readonly messages$: Observable<InboundMessage>;
  /** The protocol actually spoken: 5, or 4 (3.1.1) after a fallback. */
  readonly protocolVersion: 4 | 5;
  readonly publish: Publish;
  stats(): MqttConnectionStats;
  /**
   * Settles when the broker refuses the login on a later reconnect (a changed password, a revoked
   * user): the client then stops reconnecting. Never settles otherwise.
   */
  readonly loginRefused: Promise<BrokerLoginRefusedError>;
  /** Graceful DISCONNECT. Unacked messages stay in the broker's session for the next start. */
  close(): Promise<void>;
  /** Drop the connection without DISCONNECT, as a crash would (the session and unacked messages stay). */
  abandon(): void;
}

export interface MqttDeps {
  /** Clock for arrivalMs, epoch ms. */
  now: () => number;
  /** Connection events for the log. */
  log?: (event: string, detail?: Record<string, unknown>) => void;
  /** Events an operator must act on (a broker ignoring the window); `log` when absent. */
  warn?: (event: string, detail?: Record<string, unknown>) => void;
}

/** Broker refusals that mean "I do not speak MQTT 5": 1 (3.1.1 CONNACK return code), 0x84 (MQTT 5 reason code). */
const UNSUPPORTED_PROTOCOL = new Set([1, 0x84]);

/**
 * Connect to the broker: MQTT 5 first, 3.1.1 if the broker refuses 5 (and fallback is allowed).
 * Resolves once connected and subscribed; rejects on a refusal (bad credentials...) or invalid
 * options. Network failures before the first connection are retried with backoff, so it waits.
 */
export async function connectMqtt(input: MqttConnectionOptionsInput, deps: MqttDeps): Promise<MqttConnection> {
  const options = mqttConnectionOptionsSchema.parse(input);
  const log = deps.log ?? (() => {});
  try {
    return await attempt(options, options.protocolVersion, deps);
  } catch (error) {
    const code = (error as { code?: unknown }).code;
    if (options.protocolVersion === 5 && options.fallbackToV311 && typeof code === 'number' && UNSUPPORTED_PROTOCOL.has(code)) {
      log('mqtt_fallback_v311', { refusedCode: code });
      return attempt(options, 4, deps);
    }
    throw error;
  }
}

/** mqtt.js TLS options from PEM file paths (read now); none without `tls`. */
export function tlsClientOptions(tls: MqttConnectionOptions['tls']): Pick<IClientOptions, 'ca' | 'cert' | 'key' | 'rejectUnauthorized'> {
  if (!tls) return {};
  return {
    ca: tls.caFile ? readFileSync(tls.caFile) : undefined,
    cert: tls.certFile ? readFileSync(tls.certFile) : undefined,
    key: tls.keyFile ? readFileSync(tls.keyFile) : undefined,
    rejectUnauthorized: tls.rejectUnauthorized,
  };
}

function clientOptions(o: MqttConnectionOptions, version: 4 | 5): IClientOptions {
  return {
    ...tlsClientOptions(o.tls),
    ...serverList(o.servers),
    manualConnect: true,
    clientId: o.clientId,
    protocolVersion: version,
    clean: false,
    // Receive Maximum: how many unacknowledged QoS 1 messages the broker may send us at once, i.e.
    // how many PUBACKs we may hold while frames wait for temperature and writes batch.
    ...(version === 5 ? { properties: { sessionExpiryInterval: o.sessionExpiry_s, receiveMaximum: o.maxHeldAcks } } : {}),
    keepalive: o.keepalive_s,
    reconnectPeriod: o.reconnectInitial_ms,
    connectTimeout: o.connectTimeout_ms,
    resubscribe: true,
    // A refusal after the first connection (broker restarting, server busy) is retried with backoff;
    // a refused login is not (see the error handler).
    reconnectOnConnackError: true,
    username: o.username,
    password: o.password,
    ...(o.will ? { will: { topic: o.will.topic, payload: Buffer.from(o.will.payload), qos: 1 as const, retain: o.will.retain } } : {}),
  };
}

function attempt(o: MqttConnectionOptions, version: 4 | 5, deps: MqttDeps): Promise<MqttConnection> {
  const log = deps.log ?? (() => {});
  const client = mqtt.connect(o.url, clientOptions(o, version));
  const stats = { connects: 0, reconnectAttempts: 0 };
  let delay_ms = o.reconnectInitial_ms;

  const intake = holdPubacks(client, o.maxHeldAcks, version, deps.warn ?? log);

  const subject = new Subject<InboundMessage>();
  let early: InboundMessage[] | null = [];
  const messages$ = new Observable<InboundMessage>((subscriber) => {
    const subscription = subject.subscribe(subscriber);
    if (early) {
      const waiting = early;
      early = null;
      for (const m of waiting) subscriber.next(m);
    }
    return subscription;
  });

  client.on('message', (topic, payload, packet) => {
    const raw: RawMessage = { topic, payload: new Uint8Array(payload), arrivalMs: deps.now() };
    const ticket = packet.qos === 1 && packet.messageId !== undefined ? intake.take(packet.messageId) : { ack() {} };
    const message: InboundMessage = { raw, ack: ticket.ack };
    if (early) early.push(message);
    else subject.next(message);
  });
  // Set by abandon(): mqtt.js may already be reconnecting, and the handlers below would otherwise
  // set a reconnect period again.
  let abandoned = false;
  const endIfAbandoned = (): boolean => {
    if (!abandoned) return false;
    client.options.reconnectPeriod = 0;
    const internal = client as unknown as { disconnecting: boolean; _clearReconnect(): void; stream?: { destroy(): void } };
    if (internal.disconnecting) {
      // An orderly end() is already waiting for PUBACKs that cannot come; mqtt.js ignores a second
      // end(), and its reconnect timer would go on: stop both by hand.
      internal._clearReconnect();
      internal.stream?.destroy();
    } else client.end(true);
    return true;
  };
  client.on('reconnect', () => {
    if (endIfAbandoned()) return;
    stats.reconnectAttempts++;
    // mqtt.js reads reconnectPeriod each time it schedules, so growing it here is the backoff.
    delay_ms = nextReconnectDelay_ms(delay_ms, o);
    client.options.reconnectPeriod = delay_ms;
  });
  client.on('offline', () => log('mqtt_offline'));

  // Set once a refused login ended the client: publishing or ending it again would wait for ever.
  let endedBy: Error | null = null;
  const publish: Publish = async (topic, payload, opts = {}) => {
    if (endedBy !== null) throw endedBy;
    await client.publishAsync(topic, typeof payload === 'string' ? payload : Buffer.from(payload), {
      qos: opts.qos ?? 1,
      retain: opts.retain ?? false,
    });
  };

  let onLoginRefused: (e: BrokerLoginRefusedError) => void = () => {};
  const loginRefused = new Promise<BrokerLoginRefusedError>((resolve) => { onLoginRefused = resolve; });
  const connection: MqttConnection = {
    messages$,
    loginRefused,
    protocolVersion: version,
    publish,
    stats: () => ({ ...stats, ...intake.stats, heldAcks: intake.held, reconnectDelay_ms: delay_ms }),
    close: async () => {
      if (endedBy === null) await client.endAsync();
      subject.complete();
    },
    abandon: () => {
      // Later publishes and close() must not wait on a client that is gone.
      endedBy ??= new Error('connection abandoned');
      // No reconnect after this, even one mqtt.js has already scheduled (a broker node gone).
      abandoned = true;
      endIfAbandoned();
      subject.complete();
    },
  };

  return new Promise<MqttConnection>((resolve, reject) => {
    let settled = false;
    client.on('error', (error) => {
      log('mqtt_error', { message: error.message, code: (error as { code?: unknown }).code });
      const code = (error as { code?: unknown }).code;
      const refusedLogin = typeof code === 'number' ? loginRefusal(version, code) : null;
      const named = refusedLogin === null ? null : new BrokerLoginRefusedError(o.url, o.username, version, code as number, refusedLogin);
      if (typeof code === 'number' && (!settled || named !== null)) {
        // mqtt.js reconnects after this handler unless told here; end() alone does not stop it.
        client.options.reconnectOnConnackError = false;
        client.options.reconnectPeriod = 0;
      }
      if (!settled && typeof code === 'number') {
        settled = true; // a CONNACK refusal on the first connection: no retry
        client.end(true);
        reject(named ?? error);
      } else if (named !== null) {
        endedBy = named;
        client.end(true); // credentials do not come right by retrying
        // Publishes waiting for the reconnect would wait for ever: fail them now.
        (client as unknown as { _flush(): void })._flush();
        onLoginRefused(named);
      }
    });
    client.on('connect', (connack) => {
      if (endIfAbandoned()) return;
      stats.connects++;
      delay_ms = o.reconnectInitial_ms;
      client.options.reconnectPeriod = delay_ms;
      log('mqtt_connected', { protocolVersion: version, sessionPresent: connack.sessionPresent });
      if (settled) return;
      settled = true;
      subscribeAll(client, o.subscriptions).then(() => resolve(connection), (e) => {
        client.end(true);
        reject(e);
      });
    });
    client.connect();
  });
}

async function subscribeAll(client: MqttClient, filters: readonly string[]): Promise<void> {
  if (filters.length === 0) return;
  const granted = await client.subscribeAsync([...filters], { qos: 1 });
  const refused = granted.filter((g) => g.qos === 128).map((g) => g.topic);
  if (refused.length > 0) throw new Error(`broker refused subscriptions: ${refused.join(', ')}`);
}
