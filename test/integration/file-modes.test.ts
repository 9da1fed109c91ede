/**
 * The processor's files hold the structure's data and its alarms: each is created readable by its
 * owner only (0600). `strainward run` as its own process against a real Mosquitto (started here on a
 * free loopback port), results to line-protocol files, with a capture.
 */
import { spawn } from 'node:child_process';
import { mkdtemp, readdir, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startMosquitto } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const exists = (path: string) => stat(path).then(() => true, () => false);

describe('files of the live job', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  let dir: string;
  beforeAll(async () => {
    broker = await startMosquitto();
    dir = await mkdtemp(join(tmpdir(), 'sw-file-modes-'));
  });
  afterAll(async () => {
    await broker?.stop();
    await rm(dir, { recursive: true, force: true });
  });

  it('results, dead letters, alarm log, alarm state and capture are created 0600', async () => {
    const runtime = await writeRuntimeFile(dir, broker.url, 'test-file-modes', [...filesUnder(dir), `capture: { dir: ${join(dir, 'capture')} }`]);
    const child = spawn(process.execPath, ['bin/strainward.mjs', 'run', '-c', runtime, '--status-every', '0'], { stdio: ['ignore', 'ignore', 'pipe'] });
    let log = '';
    child.stderr.on('data', (c) => { log += c; });
    for (const end = Date.now() + 20_000; !log.includes('"started"') && Date.now() < end;) await sleep(50);
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-file-modes-loggers' });
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', JSON.stringify({ ts: Date.now(), values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', 'not json', { qos: 1 }); // a dead letter
    await pub.endAsync();
    // The loggers that stay silent raise no-data alarms: the alarm state file is written.
    for (const end = Date.now() + 20_000; !(await exists(join(dir, 'alarm-state.json'))) && Date.now() < end;) await sleep(100);
    child.kill('SIGTERM');
    expect(await new Promise((r) => child.once('exit', r))).toBe(0);

    const lp = (await readdir(join(dir, 'lp'))).map((f) => join(dir, 'lp', f));
    const capture = (await readdir(join(dir, 'capture'))).map((f) => join(dir, 'capture', f));
    const files = [...lp, join(dir, 'dl.ndjson'), join(dir, 'alarms.ndjson'), join(dir, 'alarm-state.json'), ...capture];
    expect(lp.length).toBeGreaterThan(0);
    expect(capture.length).toBe(2); // one capture file and its index
    const modes = Object.fromEntries(await Promise.all(files.map(async (f) => [f, ((await stat(f)).mode & 0o777).toString(8)])));
    expect(modes).toEqual(Object.fromEntries(files.map((f) => [f, '600'])));
  }, 60_000);
});
