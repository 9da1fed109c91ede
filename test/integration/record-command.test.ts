/**
 * `strainward record` as a separate process against a real Mosquitto (started here on a free
 * loopback port): every message of the structure's topics lands in the capture, refused ones too.
 */
import { spawn } from 'node:child_process';
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readCapture } from '../../src/adapters/capture/capture-reader.js';
import { startMosquitto } from '../support/servers.js';
import { writeRuntimeFile } from '../support/runtime-file.js';

describe('strainward record', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  beforeAll(async () => { broker = await startMosquitto(); });
  afterAll(async () => { await broker?.stop(); });

  it('captures every message, bytes as received, until stopped', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-record-'));
    const runtime = await writeRuntimeFile(dir, broker.url, 'test-recorder', [`capture: { dir: ${join(dir, 'capture')} }`]);
    const child = spawn(process.execPath, ['bin/strainward.mjs', 'record', '-c', runtime, '--flush-ms', '100'], { stdio: ['ignore', 'ignore', 'pipe'] });
    let log = '';
    child.stderr.on('data', (c) => { log += c; });
    const deadline = Date.now() + 20_000;
    while (!log.includes('"recording"') && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    expect(log).toContain('"recording"');
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-logger' });
    const payloads = [
      '{"ts": 1796000000000, "seq": 1, "values": {"t1": 11.5}}',
      '{"ts": 1796000001000, "seq": 2, "values": {"t1": 11.6}}',
      'not json at all', // recorded too: the capture keeps what arrived, good or bad
    ];
    for (const p of payloads) await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', p, { qos: 1 });
    await pub.endAsync();
    await new Promise((r) => setTimeout(r, 500));
    child.kill('SIGINT');
    await new Promise((r) => child.once('exit', r));
    const got: string[] = [];
    for await (const m of readCapture(join(dir, 'capture'))) got.push(Buffer.from(m.payload).toString());
    expect(got).toEqual(payloads);
    expect(log).toContain('"recorded":3');
  });
});
