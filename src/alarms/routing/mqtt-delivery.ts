import type { Delivery } from './select.js';
import type { DeliveryRecord } from './delivery-record.js';
import { alarmMessage } from './format.js';

/** The one MQTT call this adapter needs (mqtt.js `publishAsync` fits after a small wrap). */
export type Publish = (topic: string, payload: string, opts: { qos: 0 | 1 | 2; retain: boolean }) => Promise<void>;

/**
 * MQTT delivery: the JSON message body at QoS 1 (the client retries until the broker has it).
 * Returns the delivery record; never throws.
 */
export function createMqttDelivery(publish: Publish, now: () => number): (d: Delivery) => Promise<DeliveryRecord> {
  return async (d) => {
    const start = now();
    const topic = d.topic ?? '';
    let error: string | null = null;
    try {
      await publish(topic, JSON.stringify(alarmMessage(d.transition)), { qos: 1, retain: false });
    } catch (e) {
      error = e instanceof Error ? e.message : String(e);
    }
    const latencyMs = now() - start;
    return {
      recipientId: d.recipientId, channel: 'mqtt', target: topic, alarmId: d.transition.alarm.id,
      transition: d.transition.kind, status: error === null ? 'delivered' : 'failed', attemptCount: 1,
      attempts: [{ attempt: 1, httpStatus: null, error, latencyMs }], latencyMs, startedMs: start,
    };
  };
}
