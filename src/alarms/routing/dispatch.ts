import { redactUrl } from '../../adapters/secret.js';
import type { AlarmsConfig } from '../schema.js';
import type { AckRefusal, AlarmTransition } from '../types.js';
import type { AlarmLog } from './alarm-log.js';
import type { DeliveryRecord } from './delivery-record.js';
import { selectDeliveries, type Delivery } from './select.js';

export interface DispatchAdapters {
  mqtt?: (d: Delivery) => Promise<DeliveryRecord>;
  webhook?: (d: Delivery) => Promise<DeliveryRecord>;
  /** Every transition, refusal and delivery record is appended here. */
  log?: AlarmLog;
  now: () => number;
}

/** Sends transitions to their recipients and records everything in the alarm log. */
export interface AlarmDispatcher {
  /**
   * Deliveries of one batch. The alarm log gets the transitions at once, in order. Each target (a
   * topic, a webhook URL) has its own queue, so messages reach it in order while a target that is
   * down (retrying) delays only itself, never the control room's topic. Resolves with this
   * batch's delivery records once they are all done. Never throws on a failed delivery.
   */
  dispatch(batch: { transitions: readonly AlarmTransition[]; refusals: readonly AckRefusal[] }): Promise<DeliveryRecord[]>;
  /** Resolves when every queued delivery is done. */
  idle(): Promise<void>;
}

export function createDispatcher(cfg: AlarmsConfig, adapters: DispatchAdapters): AlarmDispatcher {
  const send = async (d: Delivery): Promise<DeliveryRecord> => {
    const adapter = d.channel.kind === 'mqtt' ? adapters.mqtt : d.channel.kind === 'webhook' ? adapters.webhook : undefined;
    if (adapter !== undefined) return adapter(d);
    const startedMs = adapters.now();
    const isLog = d.channel.kind === 'log';
    return {
      recipientId: d.recipientId, channel: d.channel.kind, target: d.topic ?? (d.channel.kind === 'webhook' ? redactUrl(d.channel.url) : 'log'),
      alarmId: d.transition.alarm.id, transition: d.transition.kind,
      // A `log` recipient reads the alarm log: the transition line written there is its delivery.
      status: isLog && adapters.log !== undefined ? 'delivered' : 'failed', attemptCount: isLog ? 1 : 0,
      attempts: isLog ? [{ attempt: 1, httpStatus: null, error: null, latencyMs: 0 }] : [],
      latencyMs: 0, startedMs,
    };
  };
  const queues = new Map<string, Promise<unknown>>();
  const enqueue = (d: Delivery): Promise<DeliveryRecord> => {
    const key = `${d.recipientId}|${d.channel.kind}|${d.topic ?? (d.channel.kind === 'webhook' ? d.channel.url : '')}`;
    const next = (queues.get(key) ?? Promise.resolve()).then(() => send(d)).then(async (rec) => {
      await adapters.log?.delivery(rec);
      return rec;
    });
    const tail = next.catch(() => undefined);
    queues.set(key, tail);
    // Forget a drained queue so the map holds only targets with work in flight.
    void tail.then(() => { if (queues.get(key) === tail) queues.delete(key); });
    return next;
  };
  return {
    async dispatch(batch) {
      for (const r of batch.refusals) await adapters.log?.refusal(r);
      const pending: Promise<DeliveryRecord>[] = [];
      for (const t of batch.transitions) {
        await adapters.log?.transition(t);
        pending.push(...selectDeliveries(cfg, t).map(enqueue));
      }
      return Promise.all(pending);
    },
    async idle() {
      while (queues.size > 0) await Promise.all([...queues.values()]);
    },
  };
}
