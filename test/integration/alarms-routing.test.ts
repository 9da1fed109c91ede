/**
 * Starts a real Mosquitto broker (startMosquitto, free 127.0.0.1 port) and a local HTTP receiver
 * (node:http, free 127.0.0.1 port). The processor side is wired as the composition root would:
 * alarmBatches -> snapshot file -> MQTT / webhook / log deliveries; acknowledgements arrive as MQTT
 * commands. Input times are virtual (T0 + seconds); only the network is real.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import mqtt, { type MqttClient } from 'mqtt';
import { concatMap, Subject, type Subscription } from 'rxjs';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import {
  AlarmsConfigSchema, alarmBatches, ackSubscription, ackUserOfTopic, buildAckCommand, createAlarmEngine, createBatchHandler, createDispatcher,
  createMqttDelivery, createWebhookDelivery, loadSnapshot, openAlarmLog, parseAckPayload,
  type AlarmInput, type AlarmLog, type AlarmLookups, type AlarmMessageBody, type DeliveryRecord,
} from '../../src/alarms/index.js';
import { configInput, frame, lookups, result, T0 } from '../alarms/fixtures.js';
import { startReceiver, waitFor } from '../alarms/support/http-receiver.js';

let broker: MosquittoServer;
let rx: Awaited<ReturnType<typeof startReceiver>>;
let dir: string;
let processor: MqttClient;
let observer: MqttClient;
let log: AlarmLog;
let sub: Subscription;
const inputs = new Subject<AlarmInput>();
const heard: { topic: string; body: AlarmMessageBody }[] = [];
const records: DeliveryRecord[] = [];
let nowMs = T0; // the processor's injected clock, advanced by the test

const testLookups: AlarmLookups = {
  ...lookups,
  loggers: new Map([
    ...lookups.loggers,
    ['LG-02', { zone: 'span-2', location: 'span 2 cabinet at abutment A2', expectedIntervalS: 10, channels: new Map() }],
  ]),
};

const s = (sec: number) => T0 + sec * 1000;
const on = (topicEnd: string, kind: string) => heard.filter((h) => h.topic.endsWith(topicEnd) && h.body.transition === kind);

beforeAll(async () => {
  broker = await startMosquitto();
  rx = await startReceiver();
  dir = await mkdtemp(join(tmpdir(), 'sw-alarms-int-'));
  const cfg = AlarmsConfigSchema.parse(configInput({
    rules: [{
      id: 'vm-girder', kind: 'limit', quantity: 'von_mises_MPa', scope: { kind: 'zone', zone: 'span-1' }, direction: 'above',
      thresholds: [{ level: 'alert', value: 200 }, { level: 'action', value: 250 }], clear_margin: 10, on_delay_s: 2, off_delay_s: 2,
      action: 'Send the deck crew to inspect girder G2 at midspan.',
    }],
    recipients: [
      { id: 'deck-crew', kind: 'crew', channels: [{ kind: 'mqtt', topic: 'strainward/{structure}/notify/deck-crew' }, { kind: 'webhook', url: rx.url, backoff_ms: 50 }] },
      { id: 'instr-crew', kind: 'crew', channels: [{ kind: 'mqtt', topic: 'strainward/{structure}/notify/instr-crew' }] },
      { id: 'on-call', kind: 'on_call', channels: [{ kind: 'mqtt', topic: 'strainward/{structure}/notify/on-call' }, { kind: 'log' }] },
    ],
    routes: [
      { match: { alarm_class: ['structural'] }, tiers: [['deck-crew'], ['on-call']] },
      { match: { alarm_class: ['health'] }, tiers: [['instr-crew'], ['on-call']] },
    ],
    escalation: { after_s: 120 },
  }));
  const url = broker.url;
  processor = await mqtt.connectAsync(url, { clientId: 'sw-alarm-processor', protocolVersion: 5, reconnectPeriod: 0 });
  observer = await mqtt.connectAsync(url, { clientId: 'sw-alarm-observer', protocolVersion: 5, reconnectPeriod: 0 });
  observer.on('message', (topic, payload) => heard.push({ topic, body: JSON.parse(payload.toString('utf8')) }));
  await observer.subscribeAsync('strainward/brannock-mere/notify/#', { qos: 1 });
  log = await openAlarmLog(join(dir, 'alarms.ndjson'));
  const now = () => performance.now();
  const dispatcher = createDispatcher(cfg, {
    mqtt: createMqttDelivery(async (topic, payload, opts) => void (await processor.publishAsync(topic, payload, opts)), now),
    webhook: createWebhookDelivery({ now }),
    log,
    now,
  });
  const handle = createBatchHandler({ snapshotPath: join(dir, 'alarms-state.json'), dispatcher });
  sub = inputs.pipe(alarmBatches(cfg, testLookups), concatMap(handle)).subscribe((r) => records.push(...r));
  processor.on('message', (topic, payload) => {
    const parsed = parseAckPayload(payload, nowMs, ackUserOfTopic(cfg, 'brannock-mere', topic) ?? '');
    if (parsed.ok) inputs.next(parsed.ack);
    else void log.refusal(parsed.refusal);
  });
  await processor.subscribeAsync(ackSubscription(cfg, 'brannock-mere'), { qos: 1 });
});

afterAll(async () => {
  sub?.unsubscribe();
  await processor?.endAsync();
  await observer?.endAsync();
  await log?.close();
  await rx?.stop();
  await broker?.stop();
  await rm(dir, { recursive: true, force: true });
});

function feedResults(fromS: number, values: number[]): void {
  values.forEach((v, i) => inputs.next({ type: 'result', result: result(s(fromS + i), v) }));
}
function tickAt(sec: number): void {
  nowMs = s(sec);
  inputs.next({ type: 'frame', frame: frame(s(sec), { ch01: 100 + sec, ch02: 50 - sec }) }); // LG-01 keeps talking
  inputs.next({ type: 'tick', nowMs: s(sec) });
}
async function sendAck(user: string, alarmId: string): Promise<void> {
  const cfg = AlarmsConfigSchema.parse(configInput());
  const cmd = buildAckCommand(cfg, 'brannock-mere', { alarmId, user, reason: 'seen on site' });
  const c = await mqtt.connectAsync(broker.url, { clientId: `sw-ack-${user}`, protocolVersion: 5, reconnectPeriod: 0 });
  await c.publishAsync(cmd.topic, cmd.payload, { qos: 1 });
  await c.endAsync();
}

describe('alarm routing end to end (Mosquitto + webhook receiver)', () => {
  const vmId = 'brannock-mere:vm-girder:g:S1-MID-G2:1';
  const noDataId = 'brannock-mere:no_data:l:LG-02:1';

  it('a stress excursion raises the configured level to the deck crew over MQTT and webhook', async () => {
    tickAt(0);
    feedResults(1, [100, 120, 150, 205, 215, 230, 226]); // above 200 from 4 s; on-delay 2 s -> raised at 6 s
    await waitFor(() => on('/deck-crew', 'raised').length === 1 && rx.received.length === 1, 'raised on MQTT and webhook');
    const m = on('/deck-crew', 'raised')[0].body;
    expect(m).toMatchObject({
      alarm_id: vmId, structure: 'brannock-mere', zone: 'span-1', location: 'span 1 midspan, girder G2 bottom flange',
      quantity: 'von_mises_MPa', value: 230, limit: 200, units: 'MPa', level: 'alert', since: new Date(s(6)).toISOString(),
      action: 'Send the deck crew to inspect girder G2 at midspan.', alarm_class: 'structural',
    });
    expect(rx.received[0].body).toEqual(m);
    expect(m.text).toContain('[ALERT] raised: brannock-mere span-1, span 1 midspan, girder G2 bottom flange');
    expect(heard.filter((h) => h.topic.endsWith('/on-call'))).toEqual([]);
  });

  it('a silent logger raises no-data to the instrumentation crew', async () => {
    tickAt(30); // LG-02 never sent a frame: silent since the first tick at 0 s, limit 3 x 10 s
    await waitFor(() => on('/instr-crew', 'raised').length === 1, 'no-data raised');
    expect(on('/instr-crew', 'raised')[0].body).toMatchObject({
      alarm_id: noDataId, rule: 'no_data', alarm_class: 'health', zone: 'span-2', location: 'span 2 cabinet at abutment A2',
      quantity: 'silence_s', value: 30, limit: 30, units: 's', subject: { kind: 'logger', logger_id: 'LG-02' },
    });
    expect(on('/instr-crew', 'raised').map((h) => h.body.rule)).toEqual(['no_data']); // LG-01 kept talking
  });

  it('escalates the unacknowledged stress alarm to on-call after escalation.after_s', async () => {
    tickAt(125);
    await new Promise((r) => setTimeout(r, 300));
    expect(on('/on-call', 'escalated')).toEqual([]); // raised at 6 s: 119 s unacknowledged, not yet 120 s
    tickAt(126);
    await waitFor(() => on('/on-call', 'escalated').length === 1, 'escalated to on-call');
    expect(on('/on-call', 'escalated')[0].body).toMatchObject({ alarm_id: vmId, tier: 1, at: new Date(s(126)).toISOString() });
    expect(on('/deck-crew', 'escalated')).toEqual([]); // an escalation tells the new tier only
  });

  it('clears with hysteresis: not inside the band, only below threshold - margin after the off-delay', async () => {
    feedResults(127, [195, 192, 191, 196, 193]);
    await new Promise((r) => setTimeout(r, 300));
    expect(on('/deck-crew', 'cleared')).toEqual([]);
    feedResults(132, [189, 180, 170, 160]); // below 190 from 132 s; off-delay 2 s -> cleared at 134 s
    await waitFor(() => on('/deck-crew', 'cleared').length === 1 && on('/on-call', 'cleared').length === 1, 'cleared to both tiers');
    expect(on('/deck-crew', 'cleared')[0].body).toMatchObject({ alarm_id: vmId, value: 170, limit: 200, at: new Date(s(134)).toISOString(), state: 'cleared_unacknowledged' });
    await waitFor(() => rx.received.length === 2, 'cleared on the webhook');
    expect((rx.received[1].body as AlarmMessageBody).transition).toBe('cleared');
  });

  it('an acknowledgement over MQTT from an allowed user acknowledges; from a disallowed user it is refused and recorded', async () => {
    nowMs = s(140);
    await sendAck('visitor', noDataId);
    await sendAck('eng-visitor', vmId);
    await new Promise((r) => setTimeout(r, 300));
    expect(heard.filter((h) => h.body.transition === 'acknowledged')).toEqual([]);
    await sendAck('tech-morrow', noDataId);
    await sendAck('eng-ashdown', vmId);
    await waitFor(() => on('/instr-crew', 'acknowledged').length === 1 && on('/deck-crew', 'acknowledged').length === 1, 'acknowledged');
    expect(on('/instr-crew', 'acknowledged')[0].body).toMatchObject({ alarm_id: noDataId, acknowledged_by: 'tech-morrow', state: 'active_acknowledged' });
    expect(on('/deck-crew', 'acknowledged')[0].body).toMatchObject({ alarm_id: vmId, acknowledged_by: 'eng-ashdown', state: 'closed' });
    await waitFor(() => records.filter((r) => r.transition === 'acknowledged').length >= 3, 'delivery records');

    const lines = (await readFile(join(dir, 'alarms.ndjson'), 'utf8')).trimEnd().split('\n').map((l) => JSON.parse(l));
    const refusals = lines.filter((l) => l.type === 'refusal').map((l) => `${l.refusal.code}:${l.refusal.user}`);
    expect(refusals).toEqual(['user_not_allowed:visitor', 'user_not_allowed:eng-visitor']);
    const transitions = lines.filter((l) => l.type === 'transition').map((l) => `${l.message.transition}:${l.message.rule}`);
    expect(transitions).toEqual([
      'raised:vm-girder', 'raised:no_data', 'escalated:vm-girder', 'cleared:vm-girder', 'acknowledged:no_data', 'acknowledged:vm-girder',
    ]);
    // the snapshot written after the last batch still holds the acknowledged no-data alarm
    const restored = createAlarmEngine(AlarmsConfigSchema.parse(configInput()), testLookups, (await loadSnapshot(join(dir, 'alarms-state.json')))!);
    expect(restored.visibleAlarms().map((a) => `${a.id}:${a.state}`)).toEqual([`${noDataId}:active_acknowledged`]);

    const failed = records.filter((r) => r.status !== 'delivered');
    expect(failed).toEqual([]);
    expect(records.filter((r) => r.channel === 'webhook').map((r) => r.attemptCount)).toEqual([1, 1, 1]); // raised, cleared, acknowledged
  });
});
