import { redact, redactUrl } from '../../adapters/secret.js';
import type { WebhookChannel } from '../schema-routing.js';
import type { Delivery } from './select.js';
import type { DeliveryAttempt, DeliveryRecord } from './delivery-record.js';
import { alarmMessage } from './format.js';

export interface WebhookDeps {
  fetch?: typeof globalThis.fetch;
  now: () => number;
  sleep?: (ms: number) => Promise<void>;
  /** The authentication header of a channel with `auth` (secret already loaded), or undefined. */
  authHeader?: (channel: WebhookChannel) => { name: string; value: string } | undefined;
}

/** Worth another try: no response, a server error, or "too many requests". */
function retryable(status: number | null): boolean {
  return status === null || status >= 500 || status === 429 || status === 408;
}

/**
 * Webhook delivery: JSON POST with a per-attempt timeout (AbortSignal.timeout), retried with
 * exponential backoff (before attempt n: backoff_ms x 2^(n-2)) on network errors, timeouts, 408, 429 and 5xx.
 * Returns the record of every attempt; never throws. The record's target is the URL with its
 * credentials and secret-looking query values redacted, and no error text carries the auth secret.
 */
export function createWebhookDelivery(deps: WebhookDeps): (d: Delivery) => Promise<DeliveryRecord> {
  const doFetch = deps.fetch ?? globalThis.fetch;
  const sleep = deps.sleep ?? ((ms: number) => new Promise<void>((r) => setTimeout(r, ms)));
  return async (d) => {
    if (d.channel.kind !== 'webhook') throw new TypeError('webhook delivery given a non-webhook channel');
    const ch = d.channel;
    const body = JSON.stringify(alarmMessage(d.transition));
    // Without a header source (a replay records the deliveries) nothing is sent with the secret; with
    // one that lacks the channel's secret, nothing is sent at all (a failed attempt says why).
    const auth = ch.auth === undefined ? undefined : deps.authHeader?.(ch);
    const authMissing = ch.auth !== undefined && deps.authHeader !== undefined && auth === undefined;
    const headers: Record<string, string> = { 'content-type': 'application/json', 'x-strainward-alarm-id': d.transition.alarm.id };
    if (auth !== undefined) headers[auth.name] = auth.value;
    const target = redactUrl(ch.url);
    const clean = (text: string): string => redact(text.split(ch.url).join(target), auth?.value);
    const attempts: DeliveryAttempt[] = [];
    const start = deps.now();
    let delivered = false;
    if (authMissing) attempts.push({ attempt: 1, httpStatus: null, error: 'not sent: the auth secret of this webhook was not loaded', latencyMs: 0 });
    for (let n = 1; n <= ch.max_attempts && !delivered && !authMissing; n++) {
      if (n > 1) await sleep(ch.backoff_ms * 2 ** (n - 2));
      const t0 = deps.now();
      let status: number | null = null;
      let error: string | null = null;
      try {
        const res = await doFetch(ch.url, {
          method: 'POST',
          headers,
          body,
          signal: AbortSignal.timeout(ch.timeout_ms),
        });
        status = res.status;
        await res.arrayBuffer().catch(() => undefined); // drain so the connection is reused
        if (!res.ok) error = `HTTP ${res.status}`;
      } catch (e) {
        error = clean(e instanceof Error ? `${e.name}: ${e.message}` : String(e));
      }
      attempts.push({ attempt: n, httpStatus: status, error, latencyMs: deps.now() - t0 });
      delivered = error === null;
      if (!delivered && !retryable(status)) break;
    }
    return {
      recipientId: d.recipientId, channel: 'webhook', target, alarmId: d.transition.alarm.id,
      transition: d.transition.kind, status: delivered ? 'delivered' : 'failed', attemptCount: attempts.length,
      attempts, latencyMs: deps.now() - start, startedMs: start,
    };
  };
}
