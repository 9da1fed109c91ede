/**
 * `strainward run` must raise alarms or say loudly that it does not. As its own process, against a
 * real Mosquitto (started here on a free loopback port): a structure file without an `alarms`
 * section is refused (exit 3, the message naming `alarms`); with `alarms: { disabled: true }` it
 * starts and says so in its log, in its presence message and in `status`.
 */
import { spawn } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { parse as parseYaml } from 'yaml';
import { CAUTION } from '../../src/model/caution.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { filesUnder } from '../support/runtime-file.js';
import { runCli } from '../support/cli-in-process.js';

let dir = '';
let broker: MosquittoServer;

/** The example structure with its `alarms` section replaced (`undefined`: removed), as JSON. */
async function structureWith(name: string, alarms: unknown): Promise<string> {
  const doc = parseYaml(await readFile('config/brannock-mere.yaml', 'utf8'), { merge: true }) as Record<string, unknown>;
  if (alarms === undefined) delete doc.alarms;
  else doc.alarms = alarms;
  const path = join(dir, `${name}.json`);
  await writeFile(path, JSON.stringify(doc));
  return path;
}

async function runtimeFor(name: string, structure: string): Promise<string> {
  const sub = join(dir, name);
  const path = join(dir, `${name}.run.yaml`);
  await writeFile(path, [
    'schema_version: 1',
    `structure: ${resolve(structure)}`,
    `mqtt: { url: "${broker.url}", client_id: ${name} }`,
    'presence: { every_s: 0.3 }',
    ...filesUnder(sub),
  ].join('\n'));
  return path;
}

function runProcess(runtime: string) {
  const child = spawn(process.execPath, ['bin/strainward.mjs', 'run', '-c', runtime, '--status-every', '0', '--log-format', 'lines'], { stdio: ['ignore', 'ignore', 'pipe'] });
  const out = { log: '' };
  child.stderr.on('data', (c) => { out.log += String(c); });
  const exited = new Promise<number | null>((r) => child.once('exit', (code) => r(code)));
  return { child, out, exited };
}

async function until(what: string, ok: () => boolean, ms = 20_000): Promise<void> {
  const deadline = Date.now() + ms;
  while (!ok()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

const status = (runtime: string) => runCli(['status', '-c', runtime, '--wait-ms', '400']);

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-alarms-decision-'));
  broker = await startMosquitto();
});
afterAll(async () => {
  await broker?.stop();
  await rm(dir, { recursive: true, force: true });
});

describe('run: alarms configured, or disabled on purpose', () => {
  it('refuses a structure file without an alarms section: exit 3, naming alarms and how to disable them', async () => {
    const runtime = await runtimeFor('test-no-alarms', await structureWith('no-alarms', undefined));
    const { out, exited } = runProcess(runtime);
    expect(await exited).toBe(3);
    expect(out.log).toContain('no-alarms.json: invalid configuration');
    expect(out.log).toMatch(/ {2}alarms: missing: without an alarms section the live job would raise no alarm at all/);
    expect(out.log).toContain('alarms: { disabled: true }');
    expect(out.log).not.toContain('started');
  }, 30_000);

  it('starts with alarms: { disabled: true }, and says so in the log, the presence message and status', async () => {
    const runtime = await runtimeFor('test-alarms-off', await structureWith('alarms-off', { disabled: true }));
    const { child, out, exited } = runProcess(runtime);
    let presence: Record<string, unknown> | null = null;
    let st: { code: number; out: string };
    try {
      await until('the start line', () => out.log.includes('started:'));
      const watcher = await mqtt.connectAsync(broker.url, { clientId: 'test-alarms-off-watch', reconnectPeriod: 0 });
      watcher.on('message', (_t, p) => { presence = JSON.parse(p.toString('utf8')) as Record<string, unknown>; });
      await watcher.subscribeAsync('strainward/brannock-mere/processor/test-alarms-off', { qos: 1 });
      await until('a presence message', () => presence !== null);
      await watcher.endAsync();
      st = await status(runtime);
    } finally {
      child.kill('SIGTERM');
    }
    expect(await exited).toBe(0);
    const lines = out.log.split('\n');
    expect(lines.filter((l) => / WARNING +alarms are DISABLED \(structure file: alarms: \{ disabled: true \}\)/.test(l))).toHaveLength(1);
    const started = lines.find((l) => l.includes('started:'))!;
    expect(started).toContain('ALARMS DISABLED');
    expect(started).toContain(CAUTION);
    expect(presence).toMatchObject({ state: 'online', processor: 'test-alarms-off', alarms_disabled: true });
    expect(st!.code).toBe(0); // computing, so healthy: the warning is said, not turned into silence
    expect(st!.out).toMatch(/^test-alarms-off {2}online /m);
    expect(st!.out).toContain('test-alarms-off  WARNING: alarms are DISABLED');
  }, 40_000);
});
