/**
 * `strainward run` as its own process against a real Mosquitto (started here on a free loopback
 * port) with a password file made by mosquitto_passwd: a refused login, at start-up or on a later
 * reconnect, ends the process with exit code 7 and a message naming the settings to check.
 */
import { execFile, spawn, type ChildProcess } from 'node:child_process';
import { mkdir, mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { promisify } from 'node:util';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EXIT } from '../../src/cli/errors.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { filesUnder } from '../support/runtime-file.js';

const run = promisify(execFile);
const USER = 'sw-processor';

describe('strainward run with a login the broker refuses', () => {
  let dir = '';
  let passwords = '';
  let broker: MosquittoServer;

  const setPassword = (password: string) => run('/usr/bin/mosquitto_passwd', ['-b', passwords, USER, password]);
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'sw-login-'));
    passwords = join(dir, 'passwords');
    await writeFile(passwords, '');
    await setPassword('right-pw');
    broker = await startMosquitto({ passwordFile: passwords });
  });
  afterAll(async () => {
    await broker?.stop();
    await rm(dir, { recursive: true, force: true });
  });

  /** Starts `run` with the password in SW_TEST_MQTT_PASSWORD; resolves with the child and its stderr so far. */
  async function startRun(name: string, password: string, protocolVersion: 4 | 5): Promise<{ child: ChildProcess; log: () => string; exit: Promise<number | null> }> {
    const sub = join(dir, name);
    await mkdir(sub, { recursive: true });
    const runtime = join(sub, 'run.yaml');
    await writeFile(runtime, [
      'schema_version: 1',
      `structure: ${resolve('config/brannock-mere.yaml')}`,
      `mqtt: { url: "${broker.url}", client_id: test-login-${name}, username: ${USER}, password_env: SW_TEST_MQTT_PASSWORD,`
        + ` protocol_version: ${protocolVersion}, fallback_to_v311: false, reconnect_initial_ms: 100 }`,
      ...filesUnder(sub),
    ].join('\n'));
    const child = spawn(process.execPath, ['bin/strainward.mjs', 'run', '-c', runtime, '--status-every', '0'], {
      stdio: ['ignore', 'ignore', 'pipe'], env: { ...process.env, SW_TEST_MQTT_PASSWORD: password },
    });
    let log = '';
    child.stderr!.on('data', (c) => { log += c; });
    const exit = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
    return { child, log: () => log, exit };
  }

  const within = <T>(p: Promise<T>, ms: number): Promise<T | 'still running'> =>
    Promise.race([p, new Promise<'still running'>((r) => setTimeout(() => r('still running'), ms))]);

  it.each([5, 4] as const)('exits with code 7 at start-up with a wrong password (MQTT protocol level %i)', async (protocolVersion) => {
    const { child, log, exit } = await startRun(`startup-v${protocolVersion}`, 'wrong-pw', protocolVersion);
    const code = await within(exit, 20_000);
    if (code === 'still running') child.kill('SIGKILL');
    expect(code).toBe(EXIT.brokerLogin);
    // Mosquitto 2.0.11 answers a wrong password with "not authorised" (measured): MQTT 3.1.1
    // section 3.2.2.3 return code 5, MQTT 5 section 3.2.2.2 reason code 0x87 (135).
    expect(log()).toContain(`not authorised (CONNACK code ${protocolVersion === 5 ? 135 : 5}`);
    expect(log()).toContain(`refused the login of user "${USER}"`);
    expect(log()).toMatch(/mqtt\.username.*mqtt\.password_env.*mqtt\.url/);
    expect(log()).not.toContain('wrong-pw'); // the password itself is never printed
  });

  it('exits with code 7 when the login is refused on a later reconnect', async () => {
    const { child, log, exit } = await startRun('reconnect', 'right-pw', 5);
    const deadline = Date.now() + 20_000;
    while (!log().includes('"started"') && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    expect(log()).toContain('"started"');

    // The password changes on the broker (reloaded on SIGHUP); a client taking over the processor's
    // client id drops its connection, and its reconnect presents the old password.
    await setPassword('new-pw');
    process.kill(broker.pid, 'SIGHUP');
    await new Promise((r) => setTimeout(r, 300));
    const intruder = await mqtt.connectAsync(broker.url, { clientId: 'test-login-reconnect', username: USER, password: 'new-pw', reconnectPeriod: 0 });
    const code = await within(exit, 20_000);
    if (code === 'still running') child.kill('SIGKILL');
    await intruder.endAsync();
    await setPassword('right-pw');
    process.kill(broker.pid, 'SIGHUP');
    expect(code).toBe(EXIT.brokerLogin);
    expect(log()).toContain('not authorised (CONNACK code 135');
    expect(log()).toContain('"stopped"'); // an orderly stop of what is in flight, then the exit
  });
});
