/**
 * Alarms on the live job, end to end, against real servers started here on free 127.0.0.1 ports and
 * stopped at the end: Mosquitto (the broker: readings in, alarm messages and acknowledgement
 * commands) and a local HTTP receiver (the crews' webhooks). Results and `sw_alarm` points go to
 * line-protocol files. The structure is a small invented test deck with an alarms section.
 */
import { mkdtemp, readdir, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt, { type MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { startLive, type LiveProcessor } from '../../src/app/live.js';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import type { AlarmCounts } from '../../src/app/alarms-wiring.js';
import { startReceiver, waitFor, type Received } from '../alarms/support/http-receiver.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { STEEL } from '../support/structures.js';
import { runCli } from '../support/cli-in-process.js';

const gauge = (id: string, logger: string) => ({
  id, kind: 'bonded_foil', channel: { logger, channel: 'ch1' }, signal: { unit: 'microstrain' },
  zero_reading: 0, zero_temperature_degC: 20, valid_range: [-3000, 3000],
});
const beam = (id: string, gaugeId: string, sensor: string, zone: string) => ({
  id, kind: 'single', material: 'steel', zone, location: `${id} bottom flange, test deck`,
  elements: [{ gauge: gaugeId }], temperature_sensors: [sensor], temperature: { mode: 'last', max_age_s: 3600 },
});

function structureDoc(webhookBase: string): Record<string, unknown> {
  const webhook = (path: string) => ({ kind: 'webhook', url: `${webhookBase}/${path}`, timeout_ms: 2000, max_attempts: 2, backoff_ms: 50 });
  return {
    schema_version: 1,
    structure: { id: 'test-deck', name: 'Invented test deck', location: 'test bench' },
    materials: [STEEL],
    loggers: [{ id: 'lg-deck', expected_interval_s: 0.5 }, { id: 'lg-pier', expected_interval_s: 0.5 }],
    temperature_sensors: [
      { id: 'tc-deck', kind: 'thermocouple', channel: { logger: 'lg-deck', channel: 't1' } },
      { id: 'tc-pier', kind: 'thermocouple', channel: { logger: 'lg-pier', channel: 't1' } },
    ],
    gauges: [gauge('sg-deck', 'lg-deck'), gauge('sg-pier', 'lg-pier')],
    groups: [beam('beam-deck', 'sg-deck', 'tc-deck', 'deck'), beam('beam-pier', 'sg-pier', 'tc-pier', 'pier')],
    alarms: {
      levels: ['advisory', 'alert', 'action'],
      rules: [{
        id: 'beam-von-mises', kind: 'limit', quantity: 'von_mises_MPa', scope: { kind: 'structure' }, direction: 'above',
        thresholds: [{ level: 'advisory', value: 150 }, { level: 'alert', value: 200 }], clear_margin: 20, action: 'Inspect the beam.',
      }],
      health: { level: 'advisory', no_data: { missing_after_intervals: 5 }, spike: { enabled: false }, flatline: { enabled: false } },
      recipients: [
        { id: 'deck-crew', kind: 'crew', channels: [{ kind: 'mqtt', topic: 'strainward/{structure}/notify/deck-crew' }, webhook('deck-crew')] },
        { id: 'on-call', kind: 'on_call', channels: [{ kind: 'mqtt', topic: 'strainward/{structure}/notify/on-call' }, webhook('on-call')] },
        { id: 'instr-crew', kind: 'crew', channels: [{ kind: 'mqtt', topic: 'strainward/{structure}/notify/instr-crew' }, webhook('instr-crew')] },
      ],
      routes: [
        { match: { alarm_class: ['structural'] }, tiers: [['deck-crew'], ['on-call']] },
        { match: { alarm_class: ['health'] }, tiers: [['instr-crew']] },
      ],
      escalation: { after_s: 1.5 },
      acknowledgement: { allowed_users: { structural: ['duty-engineer-1'], health: ['instr-tech-1'] } },
    },
  };
}

interface Heard { topic: string; body: { transition: string; alarm_id: string; rule: string; level: string; value: number | null; subject: Record<string, string> } }

let broker: MosquittoServer;
let receiver: Awaited<ReturnType<typeof startReceiver>>;
let live: LiveProcessor;
let listener: MqttClient;
let loggers: MqttClient;
let dir = '';
let runtimePath = '';
let structure: CompiledStructure;
const heard: Heard[] = [];
const stress = { 'lg-deck': 100, 'lg-pier': 60 };
const publishing = { 'lg-deck': true, 'lg-pier': true };
let timer: NodeJS.Timeout | undefined;

const on = (topicEnd: string) => heard.filter((h) => h.topic.endsWith(`/notify/${topicEnd}`)).map((h) => `${h.body.rule} ${h.body.transition} ${h.body.level}`);
const hooks = (path: string) => receiver.received.filter((r: Received) => r.path === `/hook/${path}`).map((r) => {
  const b = r.body as Heard['body'];
  return `${b.rule} ${b.transition} ${b.level}`;
});
const alarmCounts = () => live.status().alarms as AlarmCounts;

/** Each logger scans every 100 ms: the stress it carries now (single gauge, so von Mises = |stress|), at 20 degC. */
function scanOnce(seq: number): void {
  for (const logger of ['lg-deck', 'lg-pier'] as const) {
    if (!publishing[logger]) continue;
    const g = structure.groupsByLogger.get(logger)![0];
    const [raw] = readingsFromStress(g.model, [stress[logger]], 20, Number.NaN, new Float64Array(1));
    const payload = JSON.stringify({ ts: Date.now(), seq, values: { ch1: raw, t1: 20 } });
    loggers.publishAsync(`strainward/test-deck/${logger}/scan`, payload, { qos: 1 }).catch(() => undefined);
  }
}

const ack = (alarm: string, user: string) => runCli(['ack', '--config', runtimePath, '--alarm', alarm, '--user', user, '--reason', 'checked on site']);

beforeAll(async () => {
  [broker, receiver] = await Promise.all([startMosquitto(), startReceiver()]);
  dir = await mkdtemp(join(tmpdir(), 'sw-pipeline-alarms-'));
  await writeFile(join(dir, 'structure.json'), JSON.stringify(structureDoc(receiver.url)));
  runtimePath = join(dir, 'runtime.json');
  await writeFile(runtimePath, JSON.stringify({
    schema_version: 1, structure: 'structure.json', mqtt: { url: broker.url, client_id: 'strainward-test-alarms' },
    line_protocol: { dir: 'lp' }, dead_letters: { file: 'deadletters.ndjson', mqtt_topic: '' },
    alarms: { state_file: 'state/alarms.json', log_file: 'alarms.ndjson' }, tick_ms: 100,
  }));
  const loaded = await loadRuntimeFile(runtimePath);
  structure = loaded.structure;
  listener = await mqtt.connectAsync(broker.url, { clientId: 'test-crews', protocolVersion: 5, reconnectPeriod: 0 });
  listener.on('message', (topic, payload) => heard.push({ topic, body: JSON.parse(payload.toString('utf8')) }));
  await listener.subscribeAsync('strainward/test-deck/notify/#', { qos: 1 });
  live = await startLive(loaded, { now: Date.now, log: () => {} });
  loggers = await mqtt.connectAsync(broker.url, { clientId: 'test-loggers', protocolVersion: 5, reconnectPeriod: 0 });
  let seq = 0;
  timer = setInterval(() => scanOnce(seq++), 100);
}, 20_000);

afterAll(async () => {
  clearInterval(timer);
  await loggers?.endAsync();
  await listener?.endAsync();
  await Promise.all([broker?.stop(), receiver?.stop()]);
});

describe('alarms on the live pipeline (Mosquitto, webhook receiver)', () => {
  it('raises, escalates, takes an allowed acknowledgement, clears with hysteresis; a silent logger raises no-data', async () => {
    await waitFor(() => ((live.status().frames as { results: number }).results >= 10), 'the first results', 10_000);
    expect(heard).toEqual([]); // 100 MPa: below every limit, both loggers reporting

    // Excursion on the deck beam to 180 MPa (advisory 150); the pier logger falls silent at the same time.
    stress['lg-deck'] = 180;
    publishing['lg-pier'] = false;
    await waitFor(() => on('deck-crew').length >= 1, 'the raised message to the deck crew');
    const raised = heard.find((h) => h.topic.endsWith('/deck-crew'))!.body;
    expect(raised).toMatchObject({ transition: 'raised', rule: 'beam-von-mises', level: 'advisory', subject: { kind: 'group', group_id: 'beam-deck' } });
    expect(raised.value).toBeCloseTo(180, 6); // the forward model and the core agree to round-off

    // A user who may acknowledge health alarms only is refused, and the alarm goes on.
    const refused = await ack(raised.alarm_id, 'instr-tech-1');
    expect(refused.code).toBe(5); // the processor's verdict, answered on the user's verdict topic
    expect(alarmCounts().refusals).toBe(1);

    // Not acknowledged within escalation.after_s = 1.5 s: the on-call tier hears.
    await waitFor(() => on('on-call').length >= 1, 'the escalation to on-call', 10_000);
    expect(on('on-call')).toEqual(['beam-von-mises escalated advisory']);

    // Silence beyond 5 x 0.5 s: no-data to the instrumentation crew.
    await waitFor(() => on('instr-crew').length >= 1, 'no-data to the instrumentation crew', 10_000);
    const noData = heard.find((h) => h.topic.endsWith('/instr-crew'))!.body;
    expect(noData).toMatchObject({ transition: 'raised', rule: 'no_data', subject: { kind: 'logger', logger_id: 'lg-pier' } });
    expect(noData.value).toBeGreaterThanOrEqual(2.5);

    const allowed = await ack(raised.alarm_id, 'duty-engineer-1');
    expect(allowed.code).toBe(0);
    expect(allowed.out).toContain(`${raised.alarm_id}: acknowledged; the alarm is still active (by duty-engineer-1`);
    await waitFor(() => on('deck-crew').length >= 2 && on('on-call').length >= 2, 'the acknowledgement to both tiers');

    // 140 MPa is below 150 but above 150 - clear_margin 20: the alarm stays; at 120 it clears.
    stress['lg-deck'] = 140;
    await new Promise((r) => setTimeout(r, 800));
    expect(on('deck-crew')).toEqual(['beam-von-mises raised advisory', 'beam-von-mises acknowledged advisory']);
    stress['lg-deck'] = 120;
    await waitFor(() => on('deck-crew').length >= 3, 'the cleared message');

    publishing['lg-pier'] = true;
    await waitFor(() => on('instr-crew').length >= 2, 'no-data cleared');
    await waitFor(() => receiver.received.length >= 8, 'every webhook');
    clearInterval(timer);
    await live.stop();

    expect(on('deck-crew')).toEqual(['beam-von-mises raised advisory', 'beam-von-mises acknowledged advisory', 'beam-von-mises cleared advisory']);
    expect(on('on-call')).toEqual(['beam-von-mises escalated advisory', 'beam-von-mises acknowledged advisory', 'beam-von-mises cleared advisory']);
    expect(on('instr-crew')).toEqual(['no_data raised advisory', 'no_data cleared advisory']);
    expect(hooks('deck-crew')).toEqual(on('deck-crew'));
    expect(hooks('on-call')).toEqual(on('on-call'));
    expect(hooks('instr-crew')).toEqual(on('instr-crew'));
    const c = alarmCounts();
    expect(c.transitions).toEqual({ raised: 2, level_changed: 0, acknowledged: 1, cleared: 2, escalated: 1, suppressed_flapping: 0 });
    expect(c).toMatchObject({ refusals: 1, deliveries: { failed: 0 }, errors: { snapshot: 0, points: 0, log: 0, stream: 0 } });
    expect(c.deliveries.delivered).toBe(16); // 8 messages, each by MQTT and webhook
  }, 30_000);

  it('keeps the alarm record: sw_alarm points, the alarm log with the refusal, the state snapshot; commands never reach the decoder', async () => {
    const lpFiles = (await readdir(join(dir, 'lp'))).filter((f) => f.endsWith('.lp'));
    const lines = (await Promise.all(lpFiles.map((f) => readFile(join(dir, 'lp', f), 'utf8')))).join('').split('\n');
    const alarmLines = lines.filter((l) => l.startsWith('sw_alarm,'));
    expect(alarmLines.map((l) => `${/rule=([^,]+)/.exec(l)![1]} ${/transition=([^,]+)/.exec(l)![1]}`).sort()).toEqual([
      'beam-von-mises acknowledged', 'beam-von-mises cleared', 'beam-von-mises escalated', 'beam-von-mises raised', 'no_data cleared', 'no_data raised',
    ]);
    const log = (await readFile(join(dir, 'alarms.ndjson'), 'utf8')).trim().split('\n').map((l) => JSON.parse(l));
    const refusal = log.find((l) => l.type === 'refusal');
    expect(refusal.refusal).toMatchObject({ code: 'user_not_allowed', user: 'instr-tech-1' });
    expect(log.filter((l) => l.type === 'delivery')).toHaveLength(16);
    // The structural alarm was acknowledged and cleared: closed. The no-data alarm cleared unacknowledged: still visible.
    const snapshot = JSON.parse(await readFile(join(dir, 'state', 'alarms.json'), 'utf8'));
    expect(Object.values(snapshot.alarms as Record<string, { ruleId: string; state: string }>).map((a) => `${a.ruleId} ${a.state}`)).toEqual(['no_data cleared_unacknowledged']);
    expect((live.status().decode as { rejected: number }).rejected).toBe(0);
  });
});
