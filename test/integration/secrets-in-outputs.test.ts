/**
 * No secret in any output: `strainward run` as a process against a real Mosquitto (password file,
 * no anonymous access) and VictoriaMetrics (given a database token), with scans, a refused message
 * and an alarm; then `status --json`, `alarms --json` and a replay with its report. Every file the
 * run and the replay wrote, everything they printed and the retained presence and state are searched for the
 * token and the password in every encoding `secretForms` knows (as is, percent, base64, JSON).
 */
import { execFile, spawn } from 'node:child_process';
import { mkdir, mkdtemp, readdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { secretForms } from '../../src/adapters/secret.js';
import { main } from '../../src/cli/main.js';
import { loadStructureFile } from '../../src/config/load.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { startMosquitto, startVictoriaMetrics, type MosquittoServer, type VictoriaMetricsServer } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';

const run = promisify(execFile);
const TOKEN = 'dbtok-7Q2x/9f3e+2a71c4b8=d605e1aa';
const PASSWORD = 'brokerpw-5c1e&88 d0!a';
const LOGGER_PASSWORD = 'loggerpw-0b7';

let dir = '';
let broker: MosquittoServer;
let vm: VictoriaMetricsServer;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-secrets-'));
  const pw = join(dir, 'passwords');
  await writeFile(pw, '');
  await run('/usr/bin/mosquitto_passwd', ['-b', pw, 'strainward', PASSWORD]);
  await run('/usr/bin/mosquitto_passwd', ['-b', pw, 'lg-span1', LOGGER_PASSWORD]);
  [broker, vm] = await Promise.all([startMosquitto({ passwordFile: pw, allowAnonymous: false }), startVictoriaMetrics()]);
}, 30_000);

afterAll(async () => {
  await broker?.stop();
  await vm?.stop();
  await rm(dir, { recursive: true, force: true });
});

async function allFiles(root: string): Promise<string[]> {
  const out: string[] = [];
  for (const e of await readdir(root, { withFileTypes: true })) {
    const p = join(root, e.name);
    if (e.isDirectory()) out.push(...(await allFiles(p)));
    else out.push(p);
  }
  return out;
}

describe('no secret in any output of a run', () => {
  it('logs, files, dead letters, presence, status --json and the replay report hold neither the token nor the password', async () => {
    const out = join(dir, 'run');
    await mkdir(out, { recursive: true });
    const runtime = await writeRuntimeFile(out, broker.url, 'test-secrets', [
      ...filesUnder(out),
      `database: { url: "${vm.url}", org: o, bucket: b, token_env: SW_TEST_DB_TOKEN, spool: { dir: ${join(out, 'spool')} } }`,
      `capture: { dir: ${join(out, 'capture')} }`,
      'presence: { every_s: 1 }',
      'state_topics: { interval_s: 0.5 }', // group states within the run, not after 5 s
    ]);
    const text = await readFile(runtime, 'utf8');
    await writeFile(runtime, text.replace(/mqtt: \{ (.*) \}/, 'mqtt: { $1, username: strainward, password_env: SW_TEST_BROKER_PW }'));
    const env = { ...process.env, SW_TEST_DB_TOKEN: TOKEN, SW_TEST_BROKER_PW: PASSWORD };
    const child = spawn(process.execPath, ['bin/strainward.mjs', 'run', '-c', runtime], { stdio: ['ignore', 'pipe', 'pipe'], env });
    let printed = '';
    child.stdout.on('data', (c) => { printed += c; });
    child.stderr.on('data', (c) => { printed += c; });
    const deadline = Date.now() + 20_000;
    while (!printed.includes('"started"') && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    expect(printed).toContain('"started"');

    const g = (await loadStructureFile('config/brannock-mere.yaml')).groupsById.get('flange-south-mid1')!;
    const pub = await mqtt.connectAsync(broker.url, { username: 'lg-span1', password: LOGGER_PASSWORD, clientId: 'test-secrets-logger' });
    const t0 = Date.now();
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', JSON.stringify({ ts: t0, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    for (let k = 0; k < 12; k++) {
      const raw = readingsFromStress(g.model, [80], 14, Number.NaN, new Float64Array(1));
      await pub.publishAsync('strainward/brannock-mere/lg-span1/scan', JSON.stringify({ ts: t0 + 100 * k, values: { ch01: 0, ch02: 0, ch03: 0, ch04: raw[0] } }), { qos: 1 });
    }
    await pub.publishAsync('strainward/brannock-mere/lg-span1/scan', '{"ts": broken', { qos: 1 });
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', JSON.stringify({ ts: t0 + 2000, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    await pub.endAsync();
    await new Promise((r) => setTimeout(r, 2500));

    // status --json, as an operator runs it with the same environment.
    let statusOut = '';
    const saved = { ...process.env };
    Object.assign(process.env, { SW_TEST_DB_TOKEN: TOKEN, SW_TEST_BROKER_PW: PASSWORD });
    const o = vi.spyOn(process.stdout, 'write').mockImplementation((c) => { statusOut += String(c); return true; });
    const e = vi.spyOn(process.stderr, 'write').mockImplementation((c) => { statusOut += String(c); return true; });
    try {
      expect(await main(['node', 'strainward', 'status', '-c', runtime, '--wait-ms', '500', '--json'])).toBe(0);
      expect(await main(['node', 'strainward', 'alarms', '-c', runtime, '--wait-ms', '500', '--json'])).toBe(0);
    } finally {
      o.mockRestore();
      e.mockRestore();
      process.env = saved;
    }
    // The retained presence message and current state, read as the processor's login.
    const reader = await mqtt.connectAsync(broker.url, { username: 'strainward', password: PASSWORD, clientId: 'test-secrets-reader' });
    const presence: string[] = [];
    reader.on('message', (_t, p) => presence.push(p.toString('utf8')));
    await reader.subscribeAsync(['strainward/brannock-mere/processor/+', 'strainward/brannock-mere/state/#'], { qos: 1 });
    await new Promise((r) => setTimeout(r, 300));
    await reader.endAsync();
    const topics = new Set(presence.map((m) => (JSON.parse(m) as { schema?: string }).schema ?? 'presence'));
    expect([...topics].sort()).toEqual(['presence', 'strainward.group-state/1', 'strainward.open-alarms/1']);

    child.kill('SIGTERM');
    expect(await new Promise((r) => child.once('exit', r))).toBe(0);

    // A replay of the capture, with its report.
    let replayOut = '';
    const ro = vi.spyOn(process.stdout, 'write').mockImplementation((c) => { replayOut += String(c); return true; });
    const re = vi.spyOn(process.stderr, 'write').mockImplementation((c) => { replayOut += String(c); return true; });
    try {
      await main(['node', 'strainward', 'replay', '--capture', join(out, 'capture'), '-c', runtime, '--out', join(out, 'replay'), '--report', join(out, 'report.html'), '--accept-gaps']);
    } finally {
      ro.mockRestore();
      re.mockRestore();
    }
    expect((await stat(join(out, 'report.html'))).size).toBeGreaterThan(1000);

    const files = (await allFiles(out)).filter((f) => !f.endsWith('run.yaml'));
    expect(files.some((f) => f.includes('deadletters') || f.endsWith('dl.ndjson'))).toBe(true);
    const texts: Array<[string, Buffer]> = [
      ['run output', Buffer.from(printed)], ['status and alarms --json', Buffer.from(statusOut)], ['presence and state', Buffer.from(presence.join('\n'))],
      ['replay output', Buffer.from(replayOut)],
      ...(await Promise.all(files.map(async (f): Promise<[string, Buffer]> => [f, await readFile(f)]))),
    ];
    const forms = [...secretForms(TOKEN), ...secretForms(PASSWORD)];
    const leaks = texts.flatMap(([where, bytes]) => forms.filter((form) => bytes.includes(form)).map((form) => `${where}: ${form}`));
    expect(leaks).toEqual([]);
    expect(texts.length).toBeGreaterThan(8);
  }, 60_000);
});
