import type { MqttClient } from 'mqtt';
import { BrokerLoginRefusedError, loginRefusal } from '../adapters/mqtt/login-refused.js';
import { connectOneShot, type BrokerAccess } from '../adapters/mqtt/one-shot-client.js';
import { redactUrl } from '../adapters/secret.js';
import { BrokerUnreachableError } from './errors.js';

/**
 * A one-shot client for the commands that read the broker (`status`, `alarms`), whose failure to
 * connect is named: a refused login (exit 7) or a broker that cannot be reached (exit 9), with the
 * URL's credentials redacted. A watchdog must tell "the processor is silent" from "I cannot see".
 */
export async function connectToRead(
  access: BrokerAccess, o: { clientIdPrefix: string; protocolVersion: 4 | 5; timeoutMs: number; configFile: string },
): Promise<MqttClient> {
  try {
    return await connectOneShot(access, o);
  } catch (err) {
    const code = (err as { code?: unknown }).code;
    const refused = typeof code === 'number' ? loginRefusal(o.protocolVersion, code) : null;
    if (refused !== null) throw new BrokerLoginRefusedError(redactUrl(access.url), access.username, o.protocolVersion, code as number, refused);
    throw new BrokerUnreachableError(redactUrl(access.url), err instanceof Error ? err.message : String(err), o.configFile);
  }
}
