/**
 * The current state on the broker for any MQTT client, against a real Mosquitto (started here on
 * free loopback ports): each group's latest result and the open alarms, retained, updated on every
 * transition, and `strainward alarms` reading them back (table, `--json`; exit 4 with nothing
 * retained or a processor that has stopped, 9 with no broker).
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt, { type MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli as cli } from '../support/cli-in-process.js';
import { startLive, type LiveProcessor } from '../../src/app/live.js';
import { GroupStateSchema, type GroupState } from '../../src/app/state-topics/group-state.js';
import { OpenAlarmsStateSchema, type OpenAlarmsState } from '../../src/app/state-topics/open-alarms.js';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { freePort, startMosquitto, type MosquittoServer } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';
import { writeQuietRuntimeFile } from '../support/quiet-structure.js';

const S = 'strainward/brannock-mere';


async function until<T>(what: string, probe: () => T | undefined | null | false, ms = 20_000): Promise<T> {
  const deadline = Date.now() + ms;
  for (;;) {
    const v = probe();
    if (v) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

let dir = '';
let broker: MosquittoServer;
let live: LiveProcessor | null = null;
let runtime = '';
let watcher: MqttClient;
const lists: OpenAlarmsState[] = [];
const groups: GroupState[] = [];

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-state-topics-'));
  broker = await startMosquitto();
  runtime = await writeQuietRuntimeFile(dir, broker.url, 'test-state-topics', [
    'presence: { every_s: 0.3 }', 'state_topics: { interval_s: 0.3 }', ...filesUnder(dir),
  ]);
  watcher = await mqtt.connectAsync(broker.url, { clientId: 'test-state-topics-watcher' });
  // Every message is checked against the published schemas: a payload that does not fit fails here.
  watcher.on('message', (topic, p) => {
    const body = JSON.parse(p.toString('utf8'));
    if (topic === `${S}/state/alarms`) lists.push(OpenAlarmsStateSchema.parse(body));
    else groups.push(GroupStateSchema.parse(body));
  });
  await watcher.subscribeAsync([`${S}/state/alarms`, `${S}/state/groups/+`], { qos: 1 });
}, 30_000);

afterAll(async () => {
  await watcher?.endAsync();
  await live?.stop();
  await broker?.stop();
  await rm(dir, { recursive: true, force: true });
});

describe('retained state topics and strainward alarms', () => {
  it('with nothing retained, alarms exits 4 and says so', async () => {
    const r = await cli(['alarms', '-c', runtime, '--wait-ms', '300']);
    expect(r.code).toBe(4);
    expect(r.err).toContain(`no list of open alarms is retained on ${S}/state/alarms`);
  });

  it('the processor publishes the (empty) list at start; alarms prints it and exits 0', async () => {
    live = await startLive(await loadRuntimeFile(runtime), { now: Date.now, log: () => {} });
    await until('the list at start', () => lists.length > 0);
    expect(lists[0]).toMatchObject({ schema: 'strainward.open-alarms/1', structure: 'brannock-mere', processor: 'test-state-topics', count: 0, alarms: [] });
    const r = await cli(['alarms', '-c', runtime]);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^open alarms of brannock-mere: 0 \(list of \S+Z, \d+\.\d s ago; test-state-topics online\)\n$/);
  });

  it('a group\'s latest result and a raised alarm are retained; the list follows an acknowledgement; alarms shows them', async () => {
    const loaded = await loadRuntimeFile(runtime);
    const g = loaded.structure.groupsById.get('flange-south-mid1')!;
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-state-topics-loggers' });
    const t0 = Date.now() - 2_000; // never ahead of the processor's clock
    await pub.publishAsync(`${S}/lg-thermal/scan`, JSON.stringify({ ts: t0, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    // 80 MPa for 1.1 s: over the 55 MPa advisory limit of steel-von-mises for longer than its 0.5 s on-delay.
    for (let k = 0; k < 12; k++) {
      const ch04 = readingsFromStress(g.model, [80], 14, Number.NaN, new Float64Array(1))[0];
      await pub.publishAsync(`${S}/lg-span1/scan`, JSON.stringify({ ts: t0 + 100 * k, seq: k, values: { ch01: 0, ch02: 0, ch03: 0, ch04 } }), { qos: 1 });
    }
    const latest = await until('the group state of the last scan', () => groups.find((m) => m.group === 'flange-south-mid1' && m.seq === 11));
    expect(latest).toMatchObject({ structure: 'brannock-mere', processor: 'test-state-topics', zone: 'span-1', logger: 'lg-span1', time: new Date(t0 + 1100).toISOString(), flags: [], doubtful: false });
    // Round trip through the project's own forward model (readings made from 80 MPa): back within 1e-6 MPa.
    expect(Math.abs(latest.values.stress_axial_MPa! - 80)).toBeLessThan(1e-6);
    const raised = await until('the raised alarm on the list', () => lists.find((l) => l.count === 1));
    const a = raised.alarms[0];
    expect(a).toMatchObject({
      alarm_class: 'structural', rule: 'steel-von-mises', level: 'advisory', state: 'active_unacknowledged', zone: 'span-1',
      subject: { kind: 'group', group_id: 'flange-south-mid1' }, quantity: 'von_mises_MPa', limit: 55, units: 'MPa', acknowledged_by: null,
    });
    expect(Math.abs(a.value! - 80)).toBeLessThan(1e-6);

    await pub.publishAsync(`${S}/alarms/ack/duty-engineer-1`, JSON.stringify({ alarm_id: a.alarm_id, reason: 'heavy vehicle seen on camera' }), { qos: 1 });
    await pub.endAsync();
    const acked = await until('the acknowledged alarm on the list', () => lists.find((l) => l.alarms[0]?.acknowledged_by === 'duty-engineer-1'));
    expect(acked.alarms[0]).toMatchObject({ alarm_id: a.alarm_id, state: 'active_acknowledged' });

    // A client that comes later gets the retained copies, as any MQTT client would.
    const r = await cli(['alarms', '-c', runtime]);
    expect(r.code).toBe(0);
    const lines = r.out.trimEnd().split('\n');
    expect(lines[0]).toMatch(/^open alarms of brannock-mere: 1 \(list of \S+Z, \d+\.\d s ago; test-state-topics online\)$/);
    expect(lines[1]).toMatch(/^LEVEL +CLASS +STATE +SINCE \(UTC\) +SUBJECT +LOCATION +VALUE +ACKNOWLEDGED BY +ID$/);
    expect(lines[2]).toMatch(new RegExp(`^ADVISORY +structural +active, acknowledged +\\d{4}-\\d\\d-\\d\\d \\d\\d:\\d\\d:\\d\\d +group flange-south-mid1 +.+ +von_mises_MPa 80 MPa \\(limit 55 MPa\\) +duty-engineer-1 +${a.alarm_id}$`));
    expect(lines).toHaveLength(3);
    const j = await cli(['alarms', '-c', runtime, '--json']);
    expect(j.code).toBe(0);
    const json = JSON.parse(j.out);
    expect(OpenAlarmsStateSchema.parse(json).alarms).toEqual(acked.alarms);
    expect(json.processor_status).toMatchObject({ state: 'online', healthy: true, reason: '' });
  }, 30_000);

  it('once the processor has stopped, alarms still prints the list but exits 4: it may be out of date', async () => {
    await live!.stop();
    live = null;
    const r = await cli(['alarms', '-c', runtime]);
    expect(r.code).toBe(4);
    expect(r.out).toMatch(/^open alarms of brannock-mere: 1 .*test-state-topics NOT HEALTHY: stopped\)\n/);
    expect(r.err).toMatch(/the list is as of \S+Z and may be out of date: test-state-topics: stopped/);
  });

  it('with no broker answering, alarms exits 9', async () => {
    const port = await freePort();
    const r = await cli(['alarms', '-c', await writeRuntimeFile(await mkdtemp(join(dir, 'nb-')), `mqtt://127.0.0.1:${port}`, 'test-state-nobroker')]);
    expect(r.code).toBe(9);
    expect(r.err).toContain(`cannot reach the broker at mqtt://127.0.0.1:${port}`);
  });
});
