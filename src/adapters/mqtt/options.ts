import { z } from 'zod';

/**
 * MQTT connection options (a boundary: validated with zod, every problem reported at once).
 * Durations carry their unit in the name.
 */
export const mqttConnectionOptionsSchema = z.strictObject({
  /** Broker address: `mqtt://host:port` or `mqtts://host:port`. */
  url: z.string().regex(/^(mqtts?|tcp|ssl|tls):\/\/[^/]+/, 'expected mqtt://host:port or mqtts://host:port'),
  /** Every node of a clustered broker; absent: `url` alone. */
  servers: z.array(z.string().min(1)).optional(),
  /** Fixed client id: the broker keys the persistent session (and the unacked messages) on it. */
  clientId: z.string().min(1, 'a fixed client id is required for a persistent session'),
  /** Preferred protocol: 5, or 4 (= MQTT 3.1.1). */
  protocolVersion: z.union([z.literal(5), z.literal(4)], { error: 'expected 5 (MQTT 5) or 4 (MQTT 3.1.1)' }).default(5),
  /** When the broker refuses version 5, connect again with 3.1.1. */
  fallbackToV311: z.boolean().default(true),
  username: z.string().min(1).optional(),
  password: z.string().optional(),
  /** TLS material as file paths (PEM). Only meaningful with mqtts://. */
  tls: z
    .strictObject({
      caFile: z.string().min(1).optional(),
      certFile: z.string().min(1).optional(),
      keyFile: z.string().min(1).optional(),
      rejectUnauthorized: z.boolean().default(true),
    })
    .refine((t) => (t.certFile === undefined) === (t.keyFile === undefined), 'certFile and keyFile go together')
    .optional(),
  keepalive_s: z.number().int().min(0).max(65_535).default(30),
  /** MQTT 5 session expiry: how long the broker keeps the session (and queued messages) while we are away. */
  sessionExpiry_s: z.number().int().min(0).max(4_294_967_295).default(86_400),
  /** Reconnect delay: starts at the initial value, multiplied by the factor after each failed attempt, capped. */
  reconnectInitial_ms: z.number().int().min(10).default(500),
  reconnectMax_ms: z.number().int().min(10).default(30_000),
  reconnectFactor: z.number().min(1).max(10).default(2),
  connectTimeout_ms: z.number().int().min(100).default(10_000),
  /**
   * Most messages held unacknowledged at once: the window the broker is asked to keep to (MQTT 5
   * Receive Maximum; with 3.1.1 the broker's own in-flight limit must be at most this). Messages
   * beyond it are still taken (never stop reading control packets), counted and warned about.
   */
  maxHeldAcks: z.number().int().min(2).max(65_535).default(4096),
  /**
   * Last will: the broker publishes it (QoS 1) when this client goes without a DISCONNECT (process
   * killed, machine or network gone), so others learn that the processor itself is silent.
   */
  will: z.strictObject({ topic: z.string().min(1), payload: z.string(), retain: z.boolean().default(true) }).optional(),
  /** Topic filters subscribed at QoS 1 after the first connection (mqtt.js resubscribes after a lost session). */
  subscriptions: z.array(z.string().min(1)).default([]),
}).refine((o) => o.reconnectMax_ms >= o.reconnectInitial_ms, {
  message: 'reconnectMax_ms must be at least reconnectInitial_ms',
  path: ['reconnectMax_ms'],
});

export type MqttConnectionOptions = z.output<typeof mqttConnectionOptionsSchema>;
export type MqttConnectionOptionsInput = z.input<typeof mqttConnectionOptionsSchema>;

/** Delay before the next reconnect attempt, ms: `current * factor`, capped at the maximum. Pure. */
export function nextReconnectDelay_ms(current_ms: number, options: Pick<MqttConnectionOptions, 'reconnectFactor' | 'reconnectMax_ms'>): number {
  return Math.min(options.reconnectMax_ms, Math.round(current_ms * options.reconnectFactor));
}

/** mqtt.js `servers`: each node's host and port (the protocol of the first url applies to all). */
export function serverList(servers: readonly string[] | undefined): { servers?: Array<{ host: string; port: number }> } {
  if (servers === undefined || servers.length === 0) return {};
  return { servers: servers.map((s) => { const u = new URL(s); return { host: u.hostname, port: Number(u.port || (u.protocol === 'mqtts:' ? 8883 : 1883)) }; }) };
}
