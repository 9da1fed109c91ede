import { resolve } from 'node:path';
import type { MqttConnectionOptionsInput } from '../adapters/mqtt/options.js';
import type { RuntimeConfig } from '../config/runtime-schema.js';

/**
 * How every strainward client reaches the broker (live job, recorder, acknowledgement command):
 * address, user, password from the environment variable the configuration names (never from the
 * file itself), TLS files resolved against the runtime file's folder.
 */
export function brokerAccess(rc: RuntimeConfig, baseDir: string, env: NodeJS.ProcessEnv = process.env):
  Pick<MqttConnectionOptionsInput, 'url' | 'username' | 'password' | 'tls'> {
  const t = rc.mqtt.tls;
  const file = (f: string | undefined) => (f === undefined ? undefined : resolve(baseDir, f));
  return {
    url: rc.mqtt.url,
    username: rc.mqtt.username,
    password: rc.mqtt.password_env ? env[rc.mqtt.password_env] : undefined,
    ...(t ? { tls: { caFile: file(t.ca_file), certFile: file(t.cert_file), keyFile: file(t.key_file), rejectUnauthorized: t.reject_unauthorized } } : {}),
  };
}
