/**
 * The shipped broker configuration, config/mosquitto/strainward.conf, run by a real Mosquitto: a
 * copy with the port, the store folder, the password file, the ACL and the log overridden for the
 * test (free loopback port, temp folder). Its session survives a broker restart, its packet
 * limit holds, and its limits agree with the processor's defaults.
 */
import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir, userInfo } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RuntimeConfigSchema } from '../../src/config/runtime-schema.js';
import { freePort, startMosquittoWithConfig, type MosquittoServer } from '../support/servers.js';

const SHIPPED = 'config/mosquitto/strainward.conf';
const USER = 'sw-test';
const PASSWORD = 'pw-test';

/** The value of a `key value` line of a Mosquitto configuration; throws when absent or repeated. */
function setting(conf: string, key: string): string {
  const lines = conf.split('\n').filter((l) => l.startsWith(`${key} `));
  if (lines.length !== 1) throw new Error(`${SHIPPED}: expected one "${key}" line, found ${lines.length}`);
  return lines[0].slice(key.length + 1).trim();
}

describe('shipped Mosquitto configuration', () => {
  let dir = '';
  let shipped = '';
  let confPath = '';
  let port = 0;
  let broker: MosquittoServer | null = null;
  const login = { username: USER, password: PASSWORD, reconnectPeriod: 0 };

  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'sw-mosquitto-conf-'));
    shipped = await readFile(SHIPPED, 'utf8');
    port = await freePort();
    const passwords = join(dir, 'passwd');
    await writeFile(passwords, '');
    await promisify(execFile)('/usr/bin/mosquitto_passwd', ['-b', passwords, USER, PASSWORD]);
    const acl = join(dir, 'acl');
    await writeFile(acl, `user ${USER}\ntopic readwrite test/#\n`);
    const overrides: Record<string, string> = {
      listener: `${port} 127.0.0.1`, persistence_location: `${dir}/`, password_file: passwords, acl_file: acl, log_dest: 'stdout',
    };
    let copy = shipped;
    for (const [key, value] of Object.entries(overrides)) {
      setting(shipped, key); // present in the shipped file
      copy = copy.replace(new RegExp(`^${key} .*$`, 'm'), `${key} ${value}`);
    }
    // Started as root, mosquitto would switch to the `mosquitto` user, who cannot read the temp folder.
    confPath = join(dir, 'strainward.conf');
    await writeFile(confPath, `${copy}\nuser ${userInfo().username}\n`);
    broker = await startMosquittoWithConfig(confPath, port);
  });
  afterAll(async () => {
    await broker?.stop();
    await rm(dir, { recursive: true, force: true });
  });

  it('keeps the limits the processor relies on', () => {
    const defaults = RuntimeConfigSchema.parse({ schema_version: 1, structure: 's.yaml', mqtt: { url: 'mqtt://127.0.0.1', client_id: 'p' } });
    expect(setting(shipped, 'listener')).toBe('1883 127.0.0.1');
    expect(setting(shipped, 'allow_anonymous')).toBe('false');
    expect(setting(shipped, 'persistence')).toBe('true');
    expect(Number(setting(shipped, 'max_inflight_messages'))).toBe(defaults.mqtt.max_held_acks);
    expect(Number(setting(shipped, 'max_queued_messages'))).toBeGreaterThanOrEqual(100_000);
    expect(Number(setting(shipped, 'max_packet_size'))).toBeGreaterThanOrEqual(defaults.dead_letters.mqtt_max_packet_bytes);
  });

  it('refuses an anonymous client and a packet over max_packet_size', async () => {
    await expect(mqtt.connectAsync(broker!.url, { reconnectPeriod: 0 })).rejects.toThrow(/authori/i);
    const client = await mqtt.connectAsync(broker!.url, { ...login, clientId: 'sw-test-big' });
    const closed = new Promise<void>((resolve) => client.once('close', () => resolve()));
    client.publishAsync('test/big', Buffer.alloc(Number(setting(shipped, 'max_packet_size')) + 1), { qos: 1 }).catch(() => {});
    await closed; // the broker drops a client that sends more
    client.end(true);
  });

  it('keeps a persistent session and its queued messages across a broker restart', async () => {
    const sessionOptions = { ...login, clientId: 'sw-test-processor', clean: false, protocolVersion: 5 as const, properties: { sessionExpiryInterval: 3600 } };
    const processor = await mqtt.connectAsync(broker!.url, sessionOptions);
    await processor.subscribeAsync('test/scan', { qos: 1 });
    await processor.endAsync();
    const logger = await mqtt.connectAsync(broker!.url, { ...login, clientId: 'sw-test-logger' });
    for (let seq = 0; seq < 5; seq++) await logger.publishAsync('test/scan', String(seq), { qos: 1 });
    await logger.endAsync();

    await broker!.stop(); // an orderly stop writes the store
    broker = await startMosquittoWithConfig(confPath, port);

    const received: string[] = [];
    const back = mqtt.connect(broker.url, sessionOptions); // connects on the next tick: the handler is in place before
    back.on('message', (_t, payload) => received.push(payload.toString()));
    const deadline = Date.now() + 5000;
    while (received.length < 5 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
    await back.endAsync();
    expect(received).toEqual(['0', '1', '2', '3', '4']);
  });
});
