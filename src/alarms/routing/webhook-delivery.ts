import type { Delivery } from './select.js';
import type { DeliveryAttempt, DeliveryRecord } from './delivery-record.js';
import { alarmMessage } from './format.js';

export interface WebhookDeps {
  fetch?: typeof globalThis.fetch;
  now: () => number;
  sleep?: (ms: number) => Promise<void>;
}

/** Worth another try: no response, a server error, or "too many requests". */
function retryable(status: number | null): boolean {
  return status === null || status >= 500 || status === 429 || status === 408;
}

/**
 * Webhook delivery: JSON POST with a per-attempt timeout (AbortSignal.timeout), retried with
 * exponential backoff (before attempt n: backoff_ms x 2^(n-2)) on network errors, timeouts, 408, 429 and 5xx.
 * Returns the record of every attempt; never throws.
 */
export function createWebhookDelivery(deps: WebhookDeps): (d: Delivery) => Promise<DeliveryRecord> {
  const doFetch = deps.fetch ?? globalThis.fetch;
  const sleep = deps.sleep ?? ((ms: number) => new Promise<void>((r) => setTimeout(r, ms)));
  return async (d) => {
    if (d.channel.kind !== 'webhook') throw new TypeError('webhook delivery given a non-webhook channel');
    const ch = d.channel;
    const body = JSON.stringify(alarmMessage(d.transition));
    const attempts: DeliveryAttempt[] = [];
    const start = deps.now();
    let delivered = false;
    for (let n = 1; n <= ch.max_attempts && !delivered; n++) {
      if (n > 1) await sleep(ch.backoff_ms * 2 ** (n - 2));
      const t0 = deps.now();
      let status: number | null = null;
      let error: string | null = null;
      try {
        const res = await doFetch(ch.url, {
          method: 'POST',
          headers: { 'content-type': 'application/json', 'x-strainward-alarm-id': d.transition.alarm.id },
          body,
          signal: AbortSignal.timeout(ch.timeout_ms),
        });
        status = res.status;
        await res.arrayBuffer().catch(() => undefined); // drain so the connection is reused
        if (!res.ok) error = `HTTP ${res.status}`;
      } catch (e) {
        error = e instanceof Error ? `${e.name}: ${e.message}` : String(e);
      }
      attempts.push({ attempt: n, httpStatus: status, error, latencyMs: deps.now() - t0 });
      delivered = error === null;
      if (!delivered && !retryable(status)) break;
    }
    return {
      recipientId: d.recipientId, channel: 'webhook', target: ch.url, alarmId: d.transition.alarm.id,
      transition: d.transition.kind, status: delivered ? 'delivered' : 'failed', attemptCount: attempts.length,
      attempts, latencyMs: deps.now() - start, startedMs: start,
    };
  };
}
