/**
 * Rezero end to end on a real Mosquitto (started here on a free loopback port): the live job
 * (in-process) takes `strainward rezero` requests, refuses a user not allowed for the group,
 * applies the accepted zero to later results, keeps it across a restart, and a replay of the
 * capture with the audit file gives the live results frame for frame. Results go to line-protocol
 * files. A test structure of its own: one steel gauge per group, microstrain, no transverse
 * sensitivity, so the check value is Hooke's law.
 */
import { mkdtemp, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt, { type MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli as cli } from '../support/cli-in-process.js';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { startLive, type LiveProcessor } from '../../src/app/live.js';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import type { Point } from '../../src/model/point.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { baseDoc, microGauge } from '../support/structures.js';

let dir = '';
let broker: MosquittoServer;
let runtime = '';
let pub: MqttClient;
const events: Array<{ event: string; detail?: Record<string, unknown> }> = [];
const t0 = Date.now() - 20_000; // logger times in the past: never refused as ahead of the clock

async function until(check: () => Promise<boolean>, what: string, ms = 15_000): Promise<void> {
  const deadline = Date.now() + ms;
  while (!(await check())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

async function points(sub: string): Promise<Point[]> {
  const files = (await readdir(join(dir, sub)).catch(() => [] as string[])).filter((f) => f.endsWith('.lp')).sort();
  return decodeLines((await Promise.all(files.map((f) => readFile(join(dir, sub, f), 'utf8')))).join(''));
}

/** Axial stress of group `beam` per logger time (ms after t0), from the files in `sub`. */
async function beamStress(sub: string): Promise<Map<number, number>> {
  return new Map((await points(sub)).filter((p) => p.measurement === 'sw_result' && p.tags.group === 'beam')
    .map((p) => [p.timeMs - t0, p.fields.stress_axial_MPa]));
}

const start = async (): Promise<LiveProcessor> => startLive(await loadRuntimeFile(runtime), { now: () => Date.now(), log: (event, detail) => { events.push({ event, detail }); } });
const scan = (k: number, c1: number) => pub.publishAsync('strainward/test-structure/lg/scan', JSON.stringify({ ts: t0 + 100 * k, seq: k, values: { c1, c2: 0 } }), { qos: 1 });
const temperature = (k: number, t: number) => pub.publishAsync('strainward/test-structure/th/scan', JSON.stringify({ ts: t0 + 100 * k, values: { t } }), { qos: 1 });

const rezero = (user: string, group: string) => cli(['rezero', '-c', runtime, '--group', group, '--user', user, '--reason', 'gauge re-bonded after the flange repair', '--timeout-ms', '5000']);

beforeAll(async () => {
  broker = await startMosquitto();
  dir = await mkdtemp(join(tmpdir(), 'sw-rezero-live-'));
  await writeFile(join(dir, 'structure.json'), JSON.stringify(baseDoc(
    [
      { id: 'beam', kind: 'single', material: 'steel', zone: 'deck', location: 'bench beam', elements: [{ gauge: 'g1' }], temperature_sensors: ['tc'] },
      { id: 'plate', kind: 'single', material: 'steel', zone: 'plates', location: 'bench plate', elements: [{ gauge: 'g2' }] },
    ],
    [microGauge('g1', 'c1'), microGauge('g2', 'c2')],
    {
      loggers: [{ id: 'lg', expected_interval_s: 0.1 }, { id: 'th', expected_interval_s: 5 }],
      temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'th', channel: 't' } }],
      rezero: { allowed: [{ user: 'eng-1', zones: ['deck'] }, { user: 'tech-1', groups: ['plate'] }] },
      // Alarms are not what this test is about; `run` refuses a structure that does not say so.
      alarms: { disabled: true },
    },
  )));
  runtime = join(dir, 'runtime.json');
  await writeFile(runtime, JSON.stringify({
    schema_version: 1, structure: 'structure.json', mqtt: { url: broker.url, client_id: 'test-rezero-live' }, tick_ms: 200,
    line_protocol: { dir: 'lp' }, dead_letters: { file: 'dl.ndjson' }, capture: { dir: 'capture', flush_every_ms: 10 },
    rezero: { overrides_file: 'zero-overrides.json', audit_file: 'rezero-audit.ndjson' },
  }));
  pub = await mqtt.connectAsync(broker.url, { clientId: 'test-rezero-loggers' });
}, 30_000);

afterAll(async () => {
  await pub?.endAsync();
  await broker?.stop();
  await rm(dir, { recursive: true, force: true });
});

describe('rezero through the broker', () => {
  it('accepted, refused when not allowed, applied to later results, kept across a restart, and replayed alike', async () => {
    let live = await start();
    try {
      await temperature(0, 20);
      for (let k = 1; k <= 3; k++) await scan(k, 120);
      await until(async () => (await beamStress('lp')).size === 3, 'the first three results');
      // Hooke's law for a uniaxial stress, sigma = E eps (common practice): 210000 MPa x 120e-6 = 25.2 MPa.
      for (const v of (await beamStress('lp')).values()) expect(v).toBeCloseTo(25.2, 6);

      const accepted = await rezero('eng-1', 'beam');
      expect(accepted.err).toBe('');
      expect(accepted.code).toBe(0);
      expect(accepted.out).toContain('g1 on lg/c1: zero 0 -> 120 microstrain');
      expect(accepted.out).toContain('zero-reading temperature: 20 -> 20 degC');
      expect(accepted.out).toContain(`the readings of ${new Date(t0 + 300).toISOString()} are the zero of group beam`);

      const notAllowed = await rezero('tech-1', 'beam');
      expect(notAllowed.code).toBe(5);
      expect(notAllowed.err).toContain('refused (user_not_allowed): user "tech-1" may not rezero group "beam" (zone deck; rezero.allowed)');
      // Allowed by group: the plate's reading of 0 microstrain becomes its zero.
      expect((await rezero('tech-1', 'plate')).code).toBe(0);

      await scan(4, 220);
      await until(async () => (await beamStress('lp')).has(400), 'the result after the rezero');
      // 220 - 120 = 100 microstrain: 210000 MPa x 100e-6 = 21 MPa (Hooke's law, common practice).
      expect((await beamStress('lp')).get(400)).toBeCloseTo(21, 6);
    } finally {
      await live.stop();
    }

    const audit = (await readFile(join(dir, 'rezero-audit.ndjson'), 'utf8')).trim().split('\n').map((l) => JSON.parse(l));
    expect(audit.map((l) => `${l.type} ${l.record?.group_id ?? l.group_id} ${l.record?.user ?? l.user}${l.code ? ` ${l.code}` : ''}`))
      .toEqual(['rezero beam eng-1', 'refusal beam tech-1 user_not_allowed', 'rezero plate tech-1']);
    expect(audit[0].record).toMatchObject({
      reason: 'gauge re-bonded after the flange repair', readings_time_ms: t0 + 300,
      elements: [{ gauge: 'g1', channel: 'lg/c1', unit: 'microstrain', old_zero: 0, new_zero: 120 }], zero_temperature_degC: { old: 20, new: 20 },
    });
    expect(Date.parse(audit[0].record.at)).toBeGreaterThanOrEqual(t0 + 20_000); // when: the processor's clock at the request, during this test
    const overrides = JSON.parse(await readFile(join(dir, 'zero-overrides.json'), 'utf8'));
    expect(overrides.overrides.map((r: { group_id: string }) => r.group_id)).toEqual(['beam', 'plate']);
    const point = (await points('lp')).find((p) => p.measurement === 'sw_rezero' && p.tags.group === 'beam')!;
    expect(point).toMatchObject({ tags: { user: 'eng-1', zone: 'deck', reason: 'gauge re-bonded after the flange repair' }, fields: { old_zero_g1: 0, new_zero_g1: 120 }, timeMs: t0 + 300 });

    // Started again: the override is restored from the file before the first message.
    events.length = 0;
    live = await start();
    try {
      expect(events.filter((e) => e.event === 'rezero_restored').map((e) => e.detail?.group)).toEqual(['beam', 'plate']);
      await temperature(45, 20);
      await scan(5, 220);
      await scan(6, 120);
      await until(async () => (await beamStress('lp')).has(600), 'the results after the restart');
      const after = await beamStress('lp');
      expect(after.get(500)).toBeCloseTo(21, 6);
      expect(after.get(600)).toBeCloseTo(0, 6);
    } finally {
      await live.stop();
    }

    // The capture replayed with the runtime file: its audit's rezero applies from the same logger time.
    const replayed = await cli(['replay', '--capture', join(dir, 'capture'), '-c', runtime, '--out', join(dir, 'replay')]);
    expect(replayed.code, replayed.err).toBe(0);
    expect(replayed.err).toContain('2 recorded rezeros');
    const live6 = await beamStress('lp');
    const replay6 = await beamStress('replay');
    expect([...replay6.keys()].sort((a, b) => a - b)).toEqual([100, 200, 300, 400, 500, 600]);
    for (const [t, v] of replay6) expect(v, `logger time t0 + ${t} ms`).toBe(live6.get(t));
  }, 90_000);

  it('with no processor running: no verdict, exit 5 (the request waits on the broker for it)', async () => {
    const r = await cli(['rezero', '-c', runtime, '--group', 'beam', '--user', 'eng-1', '--reason', 'nobody listening', '--timeout-ms', '1500']);
    expect(r.code).toBe(5);
    expect(r.err).toContain('no verdict from the processor within 1500 ms on strainward/test-structure/rezero-verdict/eng-1');
  }, 20_000);
});
