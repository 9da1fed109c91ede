import { resolve } from 'node:path';
import type { BrokerAccess } from '../adapters/mqtt/one-shot-client.js';
import type { RuntimeConfig } from '../config/runtime-schema.js';

/**
 * How every strainward client reaches the broker (live job, recorder, ack and status commands):
 * address, user, password from the environment variable the configuration names (never from the
 * file itself), TLS files resolved against the runtime file's folder.
 */
export function brokerAccess(rc: RuntimeConfig, baseDir: string, env: NodeJS.ProcessEnv = process.env): BrokerAccess {
  const t = rc.mqtt.tls;
  const file = (f: string | undefined) => (f === undefined ? undefined : resolve(baseDir, f));
  return {
    url: rc.mqtt.url,
    ...(rc.mqtt.servers ? { servers: rc.mqtt.servers } : {}),
    connectTimeout_ms: rc.mqtt.connect_timeout_ms,
    username: rc.mqtt.username,
    password: rc.mqtt.password_env ? env[rc.mqtt.password_env] : undefined,
    ...(t ? { tls: { caFile: file(t.ca_file), certFile: file(t.cert_file), keyFile: file(t.key_file), rejectUnauthorized: t.reject_unauthorized } } : {}),
  };
}
