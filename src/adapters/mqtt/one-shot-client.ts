import { serverList } from './options.js';
import mqtt, { type MqttClient } from 'mqtt';
import { tlsClientOptions } from './connection.js';

/** Where a broker is and how to log in (see app/broker-access.ts for how a runtime file fills it). */
export interface BrokerAccess {
  url: string;
  /** Every node of a clustered broker (`mqtt://host:port` each): the client moves to the next when one goes. */
  servers?: string[];
  connectTimeout_ms?: number;
  username?: string;
  password?: string;
  tls?: { caFile?: string; certFile?: string; keyFile?: string; rejectUnauthorized: boolean };
}

/**
 * A short-lived client for one task (send a command, read retained messages): a client id of its
 * own (never the processor's, whose persistent session it would take over), a clean session, no
 * reconnecting. Rejects when the broker cannot be reached within `timeoutMs`.
 */
export function connectOneShot(access: BrokerAccess, o: { clientIdPrefix: string; protocolVersion: 4 | 5; timeoutMs: number }): Promise<MqttClient> {
  return mqtt.connectAsync(access.url, {
    ...tlsClientOptions(access.tls),
    ...serverList(access.servers),
    clientId: `${o.clientIdPrefix}-${process.pid}-${Math.floor(Math.random() * 1e9).toString(36)}`,
    protocolVersion: o.protocolVersion, clean: true, reconnectPeriod: 0, connectTimeout: o.timeoutMs,
    username: access.username, password: access.password,
  });
}
