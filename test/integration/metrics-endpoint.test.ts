/**
 * The processor's Prometheus endpoint on a live job: a real Mosquitto started here on a free
 * loopback port (scans in), the database URL a free loopback port where nothing listens (every
 * write fails, the lines go to the spool), the endpoint on 127.0.0.1 with a token. Scraped over
 * HTTP; the figures are checked against what was published and against the spool on disk.
 */
import { readdir, readFile, stat } from 'node:fs/promises';
import { request } from 'node:http';
import { mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startLive, type LiveProcessor } from '../../src/app/live.js';
import { metricsAccess } from '../../src/app/metrics-endpoint.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { freePort, startMosquitto, type MosquittoServer } from '../support/servers.js';
import { STEEL } from '../support/structures.js';

const TOKEN_ENV = 'SW_TEST_METRICS_TOKEN';
const TOKEN = 'metrics-test-token-4f1c';
const SPOOL_LIMIT_BYTES = 8 * 1024 * 1024;

const gauge = (id: string, logger: string) => ({
  id, kind: 'bonded_foil', channel: { logger, channel: 'ch1' }, signal: { unit: 'microstrain' },
  zero_reading: 0, zero_temperature_degC: 20, valid_range: [-3000, 3000],
});
const beam = (id: string, gaugeId: string, sensor: string) => ({
  id, kind: 'single', material: 'steel', zone: 'deck', location: `${id} bottom flange, test deck`,
  elements: [{ gauge: gaugeId }], temperature_sensors: [sensor], temperature: { mode: 'last', max_age_s: 3600 },
});
/** Invented test deck: two loggers, one single-gauge beam each, one von Mises rule; no-data, spike and flat-line checks out of the way. */
const STRUCTURE = {
  schema_version: 1,
  structure: { id: 'metrics-deck', name: 'Invented metrics test deck', location: 'test bench' },
  materials: [STEEL],
  // A long interval: no scan goes missing during the test, so no health alarm joins the structural ones.
  loggers: [{ id: 'lg-a', expected_interval_s: 3600 }, { id: 'lg-b', expected_interval_s: 3600 }],
  temperature_sensors: [
    { id: 'tc-a', kind: 'thermocouple', channel: { logger: 'lg-a', channel: 't1' } },
    { id: 'tc-b', kind: 'thermocouple', channel: { logger: 'lg-b', channel: 't1' } },
  ],
  gauges: [gauge('sg-a', 'lg-a'), gauge('sg-b', 'lg-b')],
  groups: [beam('beam-a', 'sg-a', 'tc-a'), beam('beam-b', 'sg-b', 'tc-b')],
  alarms: {
    levels: ['advisory', 'alert', 'action'],
    rules: [{
      id: 'beam-von-mises', kind: 'limit', quantity: 'von_mises_MPa', scope: { kind: 'structure' }, direction: 'above',
      thresholds: [{ level: 'advisory', value: 150 }, { level: 'alert', value: 200 }], clear_margin: 20, action: 'Inspect the beam.',
    }],
    health: { level: 'advisory', no_data: { missing_after_intervals: 5 }, spike: { enabled: false }, flatline: { enabled: false } },
    acknowledgement: { allowed_users: { structural: ['duty-engineer-1'], health: ['instr-tech-1'] } },
  },
};

/** Scans published per logger, and the stress each carries (single gauge: von Mises = |stress|). */
const STRESSES_MPA: Record<string, number[]> = {
  'lg-a': [...Array(9).fill(100), 170, 170, 170], // ends above advisory (150)
  'lg-b': Array(6).fill(210), // above alert (200)
};
/** Refused messages and the reason each is refused for. */
const BAD = [
  { topic: 'strainward/metrics-deck/lg-a/scan', payload: '{"ts": 1, "values": {"ch1": 0.1', reason: 'not_json' },
  { topic: 'strainward/metrics-deck/lg-a/scan', payload: JSON.stringify({ ts: Date.now(), values: { ch1: '12', t1: 20 } }), reason: 'invalid_payload' },
  { topic: 'strainward/metrics-deck/lg-a/scan', payload: JSON.stringify({ ts: Date.now(), values: { ch99: 1, t1: 20 } }), reason: 'unknown_channel' },
  { topic: 'strainward/metrics-deck/lg-zz/scan', payload: JSON.stringify({ ts: Date.now(), values: { ch1: 1 } }), reason: 'unknown_logger' },
];
/** Every scan is dated this long before it is sent: the lag has a floor the clock cannot fake. */
const DATED_BEFORE_MS = 3000;
/** Logger time between one logger's scans. */
const SCAN_STEP_MS = 50;

interface Sample { name: string; labels: Record<string, string>; value: number }

/** Prometheus text exposition format 0.0.4, sample lines only (comments skipped). */
function parseExposition(text: string): Sample[] {
  const out: Sample[] = [];
  for (const line of text.split('\n')) {
    if (line === '' || line.startsWith('#')) continue;
    const m = /^([a-zA-Z_:][a-zA-Z0-9_:]*)(?:\{(.*)\})? (\S+)$/.exec(line);
    if (m === null) throw new Error(`not a sample line: ${line}`);
    const labels: Record<string, string> = {};
    for (const l of (m[2] ?? '').matchAll(/(\w+)="((?:[^"\\]|\\.)*)"/g)) labels[l[1]] = l[2];
    out.push({ name: m[1], labels, value: Number(m[3]) });
  }
  return out;
}

function valueOf(samples: Sample[], name: string, labels: Record<string, string> = {}): number | undefined {
  const hit = samples.filter((s) => s.name === name && Object.entries(labels).every(([k, v]) => s.labels[k] === v));
  if (hit.length > 1) throw new Error(`${name} ${JSON.stringify(labels)}: ${hit.length} series`);
  return hit[0]?.value;
}

/** One GET with the given headers (node's http: the Host header can be set). */
function get(url: string, headers: Record<string, string> = {}): Promise<{ status: number; body: string; type: string }> {
  return new Promise((done, fail) => {
    const req = request(url, { headers }, (res) => {
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (c: string) => { body += c; });
      res.on('end', () => done({ status: res.statusCode ?? 0, body, type: String(res.headers['content-type'] ?? '') }));
    });
    req.on('error', fail);
    req.end();
  });
}

async function until<T>(what: string, probe: () => Promise<T | undefined>, timeoutMs = 20_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const got = await probe();
    if (got !== undefined) return got;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

let broker: MosquittoServer;
let live: LiveProcessor;
let structure: CompiledStructure;
let dir = '';
let newestSentMs: Record<string, number> = {};
const bearer = { authorization: `Bearer ${TOKEN}` };
const scrape = async (): Promise<Sample[]> => {
  const r = await get(live.metricsUrl!, bearer);
  expect(r.status).toBe(200);
  return parseExposition(r.body);
};

beforeAll(async () => {
  broker = await startMosquitto();
  dir = await mkdtemp(join(tmpdir(), 'sw-metrics-'));
  await writeFile(join(dir, 'structure.json'), JSON.stringify(STRUCTURE));
  process.env[TOKEN_ENV] = TOKEN;
  const deadDatabase = `http://127.0.0.1:${await freePort()}`; // nothing listens there
  await writeFile(join(dir, 'runtime.json'), JSON.stringify({
    schema_version: 1, structure: 'structure.json', mqtt: { url: broker.url, client_id: 'strainward-test-metrics' },
    database: {
      url: deadDatabase, org: 'test', bucket: 'metrics', max_retries: 0, min_retry_delay_ms: 50, max_retry_delay_ms: 200, timeout_ms: 2000,
      spool: { dir: 'spool', limit_bytes: SPOOL_LIMIT_BYTES },
    },
    dead_letters: { file: 'deadletters.ndjson', mqtt_topic: '' },
    alarms: { state_file: 'alarm-state.json', log_file: 'alarms.ndjson' },
    metrics: { listen: '127.0.0.1:0', token_env: TOKEN_ENV },
    tick_ms: 100,
  }));
  const loaded = await loadRuntimeFile(join(dir, 'runtime.json'));
  structure = loaded.structure;
  live = await startLive(loaded, { now: Date.now, log: () => {} });
  const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-metrics-loggers', protocolVersion: 5, reconnectPeriod: 0 });
  // Each logger's scans SCAN_STEP_MS apart in logger time, as a logger scans: the alarm engine takes a
  // second result at a logger time it has judged for a redelivery (two scans sent within one
  // millisecond once hid the advisory alarm).
  const firstTs = Date.now() - DATED_BEFORE_MS - 1000;
  for (const [logger, stresses] of Object.entries(STRESSES_MPA)) {
    const g = structure.groupsByLogger.get(logger)![0];
    for (const [seq, s] of stresses.entries()) {
      const [raw] = readingsFromStress(g.model, [s], 20, Number.NaN, new Float64Array(1));
      const ts = firstTs + seq * SCAN_STEP_MS;
      newestSentMs[logger] = ts;
      await pub.publishAsync(`strainward/metrics-deck/${logger}/scan`, JSON.stringify({ ts, seq, values: { ch1: raw, t1: 20 } }), { qos: 1 });
    }
  }
  for (const b of BAD) await pub.publishAsync(b.topic, b.payload, { qos: 1 });
  await pub.endAsync();
}, 30_000);

afterAll(async () => {
  await live?.stop();
  await broker?.stop();
  delete process.env[TOKEN_ENV];
});

describe('metrics endpoint on a live job (Mosquitto; database down, spool)', () => {
  it('counts what was published: messages, dead letters by reason, results written, open alarms by severity', async () => {
    const scans = Object.values(STRESSES_MPA).reduce((n, s) => n + s.length, 0);
    // A frame counts as written when its lines are durable; its PUBACK goes out a little later
    // (behind the storage state and earlier messages): wait for none held too (CI once scraped 3).
    const samples = await until('every scan written, every refusal counted and every message acknowledged', async () => {
      const s = await scrape();
      return valueOf(s, 'strainward_frames_written_total') === scans && valueOf(s, 'strainward_dead_letters_total') === BAD.length
        && valueOf(s, 'strainward_open_alarms', { severity: 'alert', class: 'structural', state: 'active_unacknowledged' }) === 1
        && valueOf(s, 'strainward_held_acks') === 0 ? s : undefined;
    });
    for (const s of samples.filter((x) => x.name.startsWith('strainward_'))) expect(s.labels.structure, s.name).toBe('metrics-deck');
    expect(valueOf(samples, 'strainward_messages_received_total')).toBe(scans + BAD.length);
    // One beam per logger: one result per scan.
    expect(valueOf(samples, 'strainward_results_written_total')).toBe(scans);
    for (const b of BAD) expect(valueOf(samples, 'strainward_dead_letter_reasons_total', { reason: b.reason }), b.reason).toBe(1);
    // lg-a ends at 170 MPa (advisory above 150), lg-b at 210 MPa (alert above 200); nothing else open.
    expect(valueOf(samples, 'strainward_open_alarms', { severity: 'advisory', class: 'structural', state: 'active_unacknowledged' })).toBe(1);
    expect(valueOf(samples, 'strainward_open_alarms', { severity: 'alert', class: 'structural', state: 'active_unacknowledged' })).toBe(1);
    const open = samples.filter((s) => s.name === 'strainward_open_alarms');
    expect(open).toHaveLength(3 * 2 * 3); // every level x class x open state has a series, zeros included
    expect(open.reduce((n, s) => n + s.value, 0)).toBe(2);
    expect(valueOf(samples, 'strainward_held_acks')).toBe(0);
  });

  it('says the database is down, counts its failed writes, and gives the spool as it is on disk', async () => {
    const spoolDir = join(dir, 'spool');
    const onDisk = async () => {
      let bytes = 0;
      for (const f of await readdir(spoolDir)) if (f.endsWith('.lp')) bytes += (await stat(join(spoolDir, f))).size;
      return bytes;
    };
    // Alarm transitions are spooled too, a little after the results: scrape until scrape and disk agree.
    const samples = await until('the spool figure equal to the bytes on disk', async () => {
      const before = await onDisk();
      const s = await scrape();
      return valueOf(s, 'strainward_spool_bytes') === before && (await onDisk()) === before ? s : undefined;
    });
    const bytes = valueOf(samples, 'strainward_spool_bytes')!;
    expect(bytes).toBeGreaterThan(0);
    expect(valueOf(samples, 'strainward_spool_limit_bytes')).toBe(SPOOL_LIMIT_BYTES);
    expect(valueOf(samples, 'strainward_spool_fill_ratio')).toBeCloseTo(bytes / SPOOL_LIMIT_BYTES, 12);
    expect(valueOf(samples, 'strainward_database_reachable')).toBe(0);
    expect(valueOf(samples, 'strainward_database_errors_total')).toBeGreaterThanOrEqual(1);
    // Every result written is one sw_result line in the spool (the database never took any).
    let resultLines = 0;
    for (const f of await readdir(spoolDir)) {
      if (f.endsWith('.lp')) resultLines += (await readFile(join(spoolDir, f), 'utf8')).split('\n').filter((l) => l.startsWith('sw_result,')).length;
    }
    expect(resultLines).toBe(valueOf(samples, 'strainward_results_written_total'));
  });

  it('gives each logger\'s lag: wall clock minus the logger time of its newest scan written', async () => {
    const before = Date.now();
    const samples = await scrape();
    const after = Date.now();
    for (const logger of Object.keys(STRESSES_MPA)) {
      const lag = valueOf(samples, 'strainward_lag_seconds', { logger })!;
      // Collected between the request and the answer: within those instants, to the millisecond.
      expect(lag).toBeGreaterThanOrEqual((before - newestSentMs[logger]) / 1000 - 0.001);
      expect(lag).toBeLessThanOrEqual((after - newestSentMs[logger]) / 1000 + 0.001);
      expect(lag).toBeGreaterThanOrEqual(DATED_BEFORE_MS / 1000);
    }
    expect(samples.filter((s) => s.name === 'strainward_lag_seconds').map((s) => s.labels.logger).sort()).toEqual(['lg-a', 'lg-b']);
  });

  it('serves the text format with counter and gauge types', async () => {
    const r = await get(live.metricsUrl!, bearer);
    expect(r.type).toMatch(/^text\/plain; version=0\.0\.4/);
    expect(r.body).toContain('# TYPE strainward_messages_received_total counter');
    expect(r.body).toContain('# TYPE strainward_spool_fill_ratio gauge');
    expect(r.body).toMatch(/^process_resident_memory_bytes\{structure="metrics-deck"\} \d+/m);
  });

  it('refuses a scrape without the token, with a wrong one, or under another host name', async () => {
    const none = await get(live.metricsUrl!);
    expect(none.status).toBe(401);
    expect(none.body).not.toContain('strainward_');
    const wrong = await get(live.metricsUrl!, { authorization: 'Bearer not-the-token' });
    expect(wrong.status).toBe(401);
    expect(wrong.body).toContain('wrong token');
    // A name of another site pointed at 127.0.0.1 (DNS rebinding) is refused even with the token.
    const rebound = await get(live.metricsUrl!, { ...bearer, host: 'metrics.example.invalid' });
    expect(rebound.status).toBe(421);
    const elsewhere = await get(live.metricsUrl!.replace('/metrics', '/other'), bearer);
    expect(elsewhere.status).toBe(404);
  });

  it('refuses to start beyond loopback without a token, naming the setting', async () => {
    await expect(metricsAccess({ listen: '0.0.0.0:9464' }, dir)).rejects.toThrow(/metrics\.listen 0\.0\.0\.0 is reachable from other machines: set metrics\.token_env or metrics\.token_file/);
    await expect(metricsAccess({ listen: '0.0.0.0:9464', token_env: TOKEN_ENV }, dir)).resolves.toEqual({ host: '0.0.0.0', port: 9464, token: TOKEN });
  });
});
