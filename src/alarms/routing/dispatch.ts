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
  /** Deliveries of one batch: transitions in order, each one's deliveries in parallel. Never throws on a failed delivery. */
  dispatch(batch: { transitions: readonly AlarmTransition[]; refusals: readonly AckRefusal[] }): Promise<DeliveryRecord[]>;
}

export function createDispatcher(cfg: AlarmsConfig, adapters: DispatchAdapters): AlarmDispatcher {
  const send = async (d: Delivery): Promise<DeliveryRecord> => {
    const adapter = d.channel.kind === 'mqtt' ? adapters.mqtt : d.channel.kind === 'webhook' ? adapters.webhook : undefined;
    if (adapter !== undefined) return adapter(d);
    const startedMs = adapters.now();
    const isLog = d.channel.kind === 'log';
    return {
      recipientId: d.recipientId, channel: d.channel.kind, target: d.topic ?? (d.channel.kind === 'webhook' ? d.channel.url : 'log'),
      alarmId: d.transition.alarm.id, transition: d.transition.kind,
      // A `log` recipient reads the alarm log: the transition line written there is its delivery.
      status: isLog && adapters.log !== undefined ? 'delivered' : 'failed', attemptCount: isLog ? 1 : 0,
      attempts: isLog ? [{ attempt: 1, httpStatus: null, error: null, latencyMs: 0 }] : [],
      latencyMs: 0, startedMs,
    };
  };
  return {
    async dispatch(batch) {
      const records: DeliveryRecord[] = [];
      for (const r of batch.refusals) await adapters.log?.refusal(r);
      for (const t of batch.transitions) {
        await adapters.log?.transition(t);
        const done = await Promise.all(selectDeliveries(cfg, t).map(send));
        for (const rec of done) await adapters.log?.delivery(rec);
        records.push(...done);
      }
      return records;
    },
  };
}
