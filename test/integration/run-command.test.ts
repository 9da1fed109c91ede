/**
 * `strainward run` as its own process against a real Mosquitto (started here on a free loopback
 * port), with no database configured: results go to line-protocol files (the embedded default).
 */
import { spawn } from 'node:child_process';
import { mkdtemp, readdir, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { loadStructureFile } from '../../src/config/load.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { CAUTION } from '../../src/model/caution.js';
import { startMosquitto } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';

describe('strainward run', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  beforeAll(async () => { broker = await startMosquitto(); });
  afterAll(async () => { await broker?.stop(); });

  it('turns published scans into result lines on disk and stops cleanly on SIGTERM', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-run-'));
    const runtime = await writeRuntimeFile(dir, broker.url, 'test-run-command', [
      ...filesUnder(dir),
    ]);
    const child = spawn(process.execPath, ['bin/strainward.mjs', 'run', '-c', runtime, '--status-every', '0'], { stdio: ['ignore', 'ignore', 'pipe'] });
    let log = '';
    child.stderr.on('data', (c) => { log += c; });
    const deadline = Date.now() + 20_000;
    while (!log.includes('"started"') && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    expect(log).toContain('"started"');
    // The start line carries the caution (JSON logs, as on a service).
    const started = log.split('\n').filter((l) => l.includes('"started"')).map((l) => JSON.parse(l) as { notice?: string; alarmsDisabled?: boolean });
    expect(started).toHaveLength(1);
    expect(started[0].notice).toBe(CAUTION);
    expect(started[0].alarmsDisabled).toBe(false);

    const g = (await loadStructureFile('config/brannock-mere.yaml')).groupsById.get('flange-south-mid1')!;
    const t0 = Date.now();
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-run-loggers' });
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', JSON.stringify({ ts: t0, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    for (let k = 0; k < 10; k++) {
      const raw = readingsFromStress(g.model, [20 + k], 14, Number.NaN, new Float64Array(1));
      await pub.publishAsync('strainward/brannock-mere/lg-span1/scan', JSON.stringify({ ts: t0 + 100 * k, values: { ch01: 0, ch02: 0, ch03: 0, ch04: raw[0] } }), { qos: 1 });
    }
    await pub.endAsync();
    await new Promise((r) => setTimeout(r, 1000));
    child.kill('SIGTERM');
    const code = await new Promise((r) => child.once('exit', r));
    expect(code).toBe(0);
    expect(log).toContain('"stopped"');
    const files = (await readdir(join(dir, 'lp'))).filter((f) => f.endsWith('.lp'));
    const points = decodeLines((await Promise.all(files.map((f) => readFile(join(dir, 'lp', f), 'utf8')))).join(''));
    const axial = points.filter((p) => p.measurement === 'sw_result' && p.tags.group === 'flange-south-mid1').map((p) => p.fields.stress_axial_MPa);
    expect(axial).toHaveLength(10);
    // Hooke's law through the core and back: each published stress within 1e-6 MPa.
    axial.forEach((v, k) => expect(Math.abs(v - (20 + k))).toBeLessThan(1e-6));
  });
});
