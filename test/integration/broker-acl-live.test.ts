/**
 * The live job under the shipped broker ACL (config/mosquitto/brannock-mere.acl, regenerated here
 * and compared) on a real Mosquitto with a password file (mosquitto_passwd) and no anonymous
 * access: the processor receives scans and publishes presence, `status` works for a read-only
 * viewer, viewers read the retained state topics and `alarms`, nobody can fake the processor's
 * presence or its list, and acknowledgements carry the identity the broker authenticated (the user
 * is the topic's, never the payload's).
 */
import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import mqtt, { type MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli as cli } from '../support/cli-in-process.js';
import { startLive, type LiveProcessor } from '../../src/app/live.js';
import { brokerAclText } from '../../src/cli/commands/broker-acl.js';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { waitFor } from '../alarms/support/http-receiver.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';

const run = promisify(execFile);
const S = 'strainward/brannock-mere';
const LOGINS = ['strainward', 'lg-span1', 'lg-thermal', 'duty-engineer-1', 'instr-tech-1', 'control-room-display'];
const password = (login: string) => `pw-${login}-7c1`;

let dir = '';
let broker: MosquittoServer;
let live: LiveProcessor;
let runtime = '';
let engineer: MqttClient;
const notified: Array<{ alarm_id: string; transition: string; rule_id?: string; group_id?: string }> = [];

async function connectAs(login: string): Promise<MqttClient> {
  return mqtt.connectAsync(broker.url, { username: login, password: password(login), protocolVersion: 5, reconnectPeriod: 0, clientId: `t-${login}-${Math.random().toString(36).slice(2)}` });
}


beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-acl-live-'));
  const pw = join(dir, 'passwords');
  await writeFile(pw, '');
  for (const login of LOGINS) {
    await run('/usr/bin/mosquitto_passwd', ['-b', pw, login, password(login)]);
    process.env[`SW_TEST_PW_${login.replaceAll('-', '_')}`] = password(login);
  }
  runtime = await writeRuntimeFile(dir, 'mqtt://placeholder', 'test-acl-live', filesUnder(dir));
  const acl = join(dir, 'acl');
  await writeFile(acl, await brokerAclText({ config: runtime, viewer: ['control-room-display'] }));
  broker = await startMosquitto({ passwordFile: pw, aclFile: acl, allowAnonymous: false });
  runtime = await writeRuntimeFile(dir, broker.url, 'test-acl-live', [
    ...filesUnder(dir),
  ]);
  // The processor's login, its password from the environment.
  const text = await readFile(runtime, 'utf8');
  await writeFile(runtime, text.replace(/mqtt: \{ (.*) \}/, 'mqtt: { $1, username: strainward, password_env: SW_TEST_PW_strainward }'));
  live = await startLive(await loadRuntimeFile(runtime), { now: () => Date.now(), log: () => {} });
  engineer = await connectAs('duty-engineer-1');
  engineer.on('message', (_t, payload) => { notified.push(JSON.parse(payload.toString('utf8'))); });
  await engineer.subscribeAsync(`${S}/notify/deck-crew`, { qos: 1 });
}, 30_000);

afterAll(async () => {
  await engineer?.endAsync();
  await live?.stop();
  await broker?.stop();
  await rm(dir, { recursive: true, force: true });
});

describe('the live job under the shipped broker ACL', () => {
  it('the shipped ACL file is what broker-acl prints for the example runtime file', async () => {
    const shipped = await readFile('config/mosquitto/brannock-mere.acl', 'utf8');
    expect(shipped).toBe(await brokerAclText({ config: 'config/brannock-mere.run.yaml', viewer: ['control-room-display'] }));
  });

  it('computes the loggers\' scans, raises an alarm to the crew, and status works for a read-only viewer', async () => {
    const g = (await loadRuntimeFile(runtime)).structure.groupsById.get('flange-south-mid1')!;
    const t0 = Date.now();
    const thermal = await connectAs('lg-thermal');
    await thermal.publishAsync(`${S}/lg-thermal/scan`, JSON.stringify({ ts: t0, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    await thermal.endAsync();
    const span = await connectAs('lg-span1');
    for (let k = 0; k < 12; k++) {
      const raw = readingsFromStress(g.model, [80], 14, Number.NaN, new Float64Array(1));
      await span.publishAsync(`${S}/lg-span1/scan`, JSON.stringify({ ts: t0 + 100 * k, values: { ch01: 0, ch02: 0, ch03: 0, ch04: raw[0] } }), { qos: 1 });
    }
    await span.endAsync();
    await waitFor(() => notified.some((n) => n.transition === 'raised' && n.alarm_id.includes('steel-von-mises')), 'the structural alarm at the deck crew');
    const st = await cli(['status', '-c', runtime, '--wait-ms', '400', '--mqtt-username', 'control-room-display', '--mqtt-password-env', 'SW_TEST_PW_control_room_display']);
    expect(st.err).toBe('');
    expect(st.code).toBe(0);
  }, 30_000);

  it('viewers read the retained state (group results, open alarms) that only the processor may write', async () => {
    const viewer = await connectAs('control-room-display');
    const outcome = await viewer.publishAsync(`${S}/state/alarms`, JSON.stringify({ schema: 'strainward.open-alarms/1', structure: 'brannock-mere', processor: 'fake', at: new Date().toISOString(), count: 0, alarms: [] }), { qos: 1, retain: true })
      .then(() => 'accepted', (e: { code?: number }) => e.code);
    expect(outcome).toBe(0x87); // MQTT 5 PUBACK "Not authorized" (MQTT 5.0, 3.4.2.1): only the processor writes the state
    const seen = new Map<string, { processor: string; group?: string }>();
    viewer.on('message', (t, p) => seen.set(t, JSON.parse(p.toString('utf8'))));
    await viewer.subscribeAsync([`${S}/state/alarms`, `${S}/state/groups/+`], { qos: 1 });
    await waitFor(() => seen.has(`${S}/state/groups/flange-south-mid1`) && seen.has(`${S}/state/alarms`), 'the retained state, read by a viewer', 15_000);
    await viewer.endAsync();
    expect(seen.get(`${S}/state/groups/flange-south-mid1`)).toMatchObject({ processor: 'test-acl-live', group: 'flange-south-mid1' });
    expect(seen.get(`${S}/state/alarms`)).toMatchObject({ processor: 'test-acl-live' });
    const r = await cli(['alarms', '-c', runtime, '--json', '--mqtt-username', 'control-room-display', '--mqtt-password-env', 'SW_TEST_PW_control_room_display']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const list = JSON.parse(r.out) as { processor: string; alarms: Array<{ rule: string }> };
    expect(list.processor).toBe('test-acl-live');
    expect(list.alarms.map((a) => a.rule)).toContain('steel-von-mises');
  }, 30_000);

  it('nobody but the processor can publish its presence: refused (MQTT 5 PUBACK 0x87; 3.1.1 dropped), seen by no subscriber nor status', async () => {
    const fake = JSON.stringify({ state: 'online', processor: 'fake-processor', structure: 'brannock-mere', at: new Date().toISOString(), every_s: 10 });
    // A login that may read presence watches the fake processor's topic throughout.
    const watcher = await connectAs('duty-engineer-1');
    const seen: string[] = [];
    watcher.on('message', (topic) => seen.push(topic));
    await watcher.subscribeAsync(`${S}/processor/fake-processor`, { qos: 1 });
    // MQTT 5: the broker answers the denied QoS 1 publish with PUBACK reason 0x87 "Not authorized"
    // (MQTT 5.0, 3.4.2.1); anything else, "accepted" included, fails.
    const viewer = await connectAs('control-room-display');
    const reason = await viewer.publishAsync(`${S}/processor/fake-processor`, fake, { qos: 1, retain: true })
      .then(() => 'accepted', (e: { code?: number }) => e.code);
    await viewer.endAsync();
    expect(reason).toBe(0x87);
    // MQTT 3.1.1 has no refusal in its PUBACK: the broker acknowledges and drops the message, so the
    // evidence is that neither the watcher nor status (the retained message) ever sees it.
    const old = await mqtt.connectAsync(broker.url, {
      username: 'control-room-display', password: password('control-room-display'), protocolVersion: 4, reconnectPeriod: 0, clientId: `t-v311-${Math.random().toString(36).slice(2)}`,
    });
    await old.publishAsync(`${S}/processor/fake-processor`, fake, { qos: 1, retain: true });
    await old.endAsync();
    const st = await cli(['status', '-c', runtime, '--wait-ms', '400', '--json', '--mqtt-username', 'control-room-display', '--mqtt-password-env', 'SW_TEST_PW_control_room_display']);
    const processors = (JSON.parse(st.out) as { processors: Array<{ processor: string }> }).processors.map((p) => p.processor);
    expect(processors).toEqual(['test-acl-live']);
    // The watcher's own round trip after status: anything the broker had delivered would be here by now.
    await watcher.unsubscribeAsync(`${S}/processor/fake-processor`);
    await watcher.endAsync();
    expect(seen).toEqual([]);
  }, 20_000);

  it('acknowledgements: the identity is the authenticated login; refusals are answered on MQTT with exit 5', async () => {
    const alarmId = notified.find((n) => n.transition === 'raised' && n.alarm_id.includes('steel-von-mises'))!.alarm_id;
    const ack = (login: string, extra: string[] = []) => cli([
      'ack', '-c', runtime, '--alarm', alarmId, '--user', login, '--reason', 'checked the deck from the camera', '--timeout-ms', '3000',
      '--mqtt-password-env', `SW_TEST_PW_${login.replaceAll('-', '_')}`, ...extra,
    ]);
    // A technician allowed health alarms only: refused by the processor, answered on their verdict topic.
    const tech = await ack('instr-tech-1');
    expect(tech.code).toBe(5);
    expect(tech.err).toMatch(/refused \(user_not_allowed\): user "instr-tech-1" may not acknowledge structural alarms/);
    // The same technician signing as the duty engineer in the payload: identity_mismatch.
    const forger = await connectAs('instr-tech-1');
    const verdicts: string[] = [];
    forger.on('message', (_t, p) => verdicts.push(p.toString('utf8')));
    await forger.subscribeAsync(`${S}/alarms/ack-verdict/instr-tech-1`, { qos: 1 });
    await forger.publishAsync(`${S}/alarms/ack/instr-tech-1`, JSON.stringify({ alarm_id: alarmId, user: 'duty-engineer-1', reason: 'forged' }), { qos: 1 });
    // ...and on the duty engineer's own topic: the broker refuses it (MQTT 5 PUBACK 0x87), never "accepted".
    const forged = await forger.publishAsync(`${S}/alarms/ack/duty-engineer-1`, JSON.stringify({ alarm_id: alarmId, reason: 'forged' }), { qos: 1 })
      .then(() => 'accepted', (e: { code?: number }) => e.code);
    expect(forged).toBe(0x87);
    await waitFor(() => verdicts.length >= 1, 'the identity_mismatch verdict');
    expect(JSON.parse(verdicts[0])).toMatchObject({ verdict: 'refused', code: 'identity_mismatch', user: 'instr-tech-1' });
    await forger.endAsync();
    // A viewer cannot publish a command at all: the broker refuses it (MQTT 5 PUBACK 0x87), exit 5.
    const viewer = await ack('control-room-display');
    expect(viewer.code).toBe(5);
    expect(viewer.err).toMatch(/the broker refused the command: login "control-room-display" may not publish on strainward\/brannock-mere\/alarms\/ack\/control-room-display \(broker ACL\)/);
    // The duty engineer: acknowledged, the verdict printed, exit 0; the alarm log records who and why.
    const eng = await ack('duty-engineer-1');
    expect(eng.err).toBe('');
    expect(eng.code).toBe(0);
    expect(eng.out).toMatch(/acknowledged; the alarm is still active \(by duty-engineer-1/);
    await waitFor(() => notified.some((n) => n.transition === 'acknowledged'), 'the acknowledged message');
    const log = (await readFile(join(dir, 'alarms.ndjson'), 'utf8')).trim().split('\n').map((l) => JSON.parse(l));
    const acked = log.filter((l) => l.type === 'transition' && l.message.transition === 'acknowledged');
    expect(acked).toHaveLength(1);
    expect(acked[0].message).toMatchObject({ alarm_id: alarmId, acknowledged_by: 'duty-engineer-1', acknowledged_reason: 'checked the deck from the camera' });
    const refusals = log.filter((l) => l.type === 'refusal').map((l) => `${l.refusal.code}:${l.refusal.user}`);
    expect(refusals).toEqual(['user_not_allowed:instr-tech-1', 'identity_mismatch:instr-tech-1']);
  }, 30_000);

  it('rezero requests: only a login named in rezero.allowed may publish one, on its own topic', async () => {
    const rezero = (login: string) => cli([
      'rezero', '-c', runtime, '--group', 'flange-south-mid1', '--user', login, '--reason', 'gauge re-bonded', '--timeout-ms', '3000',
      '--mqtt-password-env', `SW_TEST_PW_${login.replaceAll('-', '_')}`,
    ]);
    // A technician may acknowledge health alarms but not rezero: the broker does not take the request (MQTT 5 PUBACK 0x87), exit 5.
    const tech = await rezero('instr-tech-1');
    expect(tech.code).toBe(5);
    expect(tech.err).toContain('the broker refused the request: login "instr-tech-1" may not publish on strainward/brannock-mere/rezero/instr-tech-1 (broker ACL)');
    // The duty engineer: decided by the processor against the scans published above, answered on the verdict topic.
    const eng = await rezero('duty-engineer-1');
    expect(eng.err).toBe('');
    expect(eng.code).toBe(0);
    expect(eng.out).toContain('sg-sm-a on lg-span1/ch04: zero 0 ->');
  }, 20_000);
});
