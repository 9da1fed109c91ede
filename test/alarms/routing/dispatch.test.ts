import { describe, expect, it } from 'vitest';
import { createDispatcher } from '../../../src/alarms/routing/dispatch.js';
import { createMqttDelivery } from '../../../src/alarms/routing/mqtt-delivery.js';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import { publishAck } from '../../../src/alarms/ack.js';
import type { AlarmLog } from '../../../src/alarms/routing/alarm-log.js';
import { config, lookups, result, T0 } from '../fixtures.js';

/** In-memory stand-ins for the adapters' injected calls (the real broker is in test/integration). */
function memoryLog(lines: string[]): AlarmLog {
  return {
    transition: async (t) => void lines.push(`transition:${t.kind}`),
    refusal: async (r) => void lines.push(`refusal:${r.code}`),
    delivery: async (d) => void lines.push(`delivery:${d.recipientId}:${d.channel}:${d.status}`),
    close: async () => undefined,
  };
}

describe('dispatcher', () => {
  const cfg = config({
    recipients: [
      { id: 'deck-crew', kind: 'crew', channels: [{ kind: 'mqtt', topic: 'sw/{structure}/{zone}/{level}' }, { kind: 'webhook', url: 'http://127.0.0.1:9/x' }] },
      { id: 'control', kind: 'control_room', channels: [{ kind: 'log' }] },
    ],
    routes: [{ match: {}, tiers: [['deck-crew', 'control']] }],
  });
  const t = createAlarmEngine(cfg, { ...lookups, loggers: new Map() }).step({ type: 'result', result: result(T0, 260) }).transitions[0];

  it('publishes, records each delivery in the log, marks a channel without adapter as failed', async () => {
    const published: string[] = [];
    const lines: string[] = [];
    let clock = 0;
    const d = createDispatcher(cfg, {
      mqtt: createMqttDelivery(async (topic, _p, opts) => void published.push(`${topic}:q${opts.qos}`), () => (clock += 5)),
      log: memoryLog(lines),
      now: () => 0,
    });
    const recs = await d.dispatch({ transitions: [t], refusals: [] });
    expect(published).toEqual(['sw/brannock-mere/span-1/action:q1']);
    expect(recs.map((r) => `${r.recipientId}:${r.channel}:${r.status}:${r.attemptCount}`)).toEqual([
      'deck-crew:mqtt:delivered:1', 'deck-crew:webhook:failed:0', 'control:log:delivered:1',
    ]);
    expect(recs[0].latencyMs).toBe(5);
    // The transition is logged at once; each delivery when it is done (targets run independently).
    expect(lines[0]).toBe('transition:raised');
    expect(lines.slice(1).sort()).toEqual(['delivery:control:log:delivered', 'delivery:deck-crew:mqtt:delivered', 'delivery:deck-crew:webhook:failed']);
  });

  it('a slow target delays only itself: later messages reach the other targets first, each target in order', async () => {
    const events: string[] = [];
    let releaseWebhook: () => void = () => {};
    const webhookGate = new Promise<void>((r) => { releaseWebhook = r; });
    const d = createDispatcher(cfg, {
      mqtt: createMqttDelivery(async (topic) => void events.push(`mqtt ${topic}`), () => 0),
      webhook: async (delivery) => {
        await webhookGate; // a receiver that is down and being retried
        events.push(`webhook ${delivery.transition.kind}`);
        return { recipientId: delivery.recipientId, channel: 'webhook', target: 'x', alarmId: delivery.transition.alarm.id, transition: delivery.transition.kind,
          status: 'delivered', attemptCount: 1, attempts: [], latencyMs: 0, startedMs: 0 };
      },
      now: () => 0,
    });
    const first = d.dispatch({ transitions: [t], refusals: [] });
    const second = d.dispatch({ transitions: [{ ...t, kind: 'escalated' }], refusals: [] });
    await new Promise((r) => setTimeout(r, 20));
    expect(events).toEqual(['mqtt sw/brannock-mere/span-1/action', 'mqtt sw/brannock-mere/span-1/action']);
    releaseWebhook();
    await Promise.all([first, second, d.idle()]);
    expect(events.slice(2)).toEqual(['webhook raised', 'webhook escalated']);
  });

  it('an MQTT publish failure is a failed record, not a thrown error', async () => {
    const d = createDispatcher(cfg, { mqtt: createMqttDelivery(async () => { throw new Error('not connected'); }, () => 0), now: () => 0 });
    const [rec] = await d.dispatch({ transitions: [t], refusals: [] });
    expect(rec).toMatchObject({ status: 'failed', attempts: [{ error: 'not connected' }] });
  });

  it('publishAck publishes the validated command at QoS 1', async () => {
    const sent: unknown[] = [];
    await publishAck(async (topic, payload, opts) => void sent.push({ topic, payload: JSON.parse(payload), opts }), cfg, 'brannock-mere', { alarmId: t.alarm.id, user: 'eng-ashdown', reason: 'ok' });
    expect(sent).toEqual([{ topic: 'strainward/brannock-mere/alarms/ack/eng-ashdown', payload: { alarm_id: t.alarm.id, user: 'eng-ashdown', reason: 'ok' }, opts: { qos: 1, retain: false } }]);
  });
});
