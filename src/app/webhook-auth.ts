import { resolve } from 'node:path';
import { loadToken } from '../adapters/secret.js';
import type { AlarmsConfig } from '../alarms/index.js';
import type { WebhookChannel } from '../alarms/schema-routing.js';

/** The header each authenticated webhook channel sends, keyed by the channel object of the config. */
export type WebhookAuthHeaders = ReadonlyMap<WebhookChannel, { name: string; value: string }>;

/**
 * Loads every webhook channel's authentication secret now (at start), from its environment
 * variable or its file (relative to `baseDir`, the runtime file's folder; mode 600 required), so a
 * missing secret stops the start instead of failing the first alarm. Throws SecretError, whose
 * message names the variable or file, never the secret.
 */
export async function loadWebhookAuth(cfg: AlarmsConfig | null, baseDir: string, environment: NodeJS.ProcessEnv = process.env): Promise<WebhookAuthHeaders> {
  const headers = new Map<WebhookChannel, { name: string; value: string }>();
  for (const recipient of cfg?.recipients ?? []) {
    for (const channel of recipient.channels) {
      if (channel.kind !== 'webhook' || channel.auth === undefined) continue;
      const a = channel.auth;
      const secret = await loadToken({ env: a.secret_env, file: a.secret_file === undefined ? undefined : resolve(baseDir, a.secret_file) }, environment);
      if (secret === null) continue; // unreachable: the schema requires one source
      headers.set(channel, { name: a.header.toLowerCase(), value: `${a.prefix}${secret}` });
    }
  }
  return headers;
}
