/**
 * No failure is silent, end to end: `strainward run` as its own process against a real Mosquitto
 * and a real VictoriaMetrics (both on free loopback ports) while a publisher sends scans. The
 * database is stopped: a warning line in the log, an instrument-health (`component_fault`) alarm to
 * the instrumentation crew, and `status` shows it (database unreachable, the fault, the open alarm).
 * The database is started again on the same port and data: a warning line that it is back, the alarm
 * clears, and `status` shows the database reachable and no fault.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt, { type MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { startMosquitto, startVictoriaMetrics, type MosquittoServer, type VictoriaMetricsServer } from '../support/servers.js';
import { filesUnder } from '../support/runtime-file.js';
import { writeQuietRuntimeFile } from '../support/quiet-structure.js';
import { runCli } from '../support/cli-in-process.js';

const S = 'strainward/brannock-mere';

async function until<T>(what: string, probe: () => T | null | undefined | false | Promise<T | null | undefined | false>, ms = 40_000): Promise<T> {
  const deadline = Date.now() + ms;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

interface StatusJson {
  processors: Array<{ processor: string; healthy: boolean; details: {
    database_reachable: boolean | null; spool_bytes: number | null;
    open_alarms: { total: number; by_level: Record<string, number>; unacknowledged: number };
    component_faults: Array<{ component: string; failure: string; since: string }>;
  } }>;
}

async function statusJson(runtime: string): Promise<{ code: number; json: StatusJson }> {
  const { code, out } = await runCli(['status', '-c', runtime, '--wait-ms', '300', '--json']);
  return { code, json: JSON.parse(out) as StatusJson };
}

let dir = '';
let runtime = '';
let broker: MosquittoServer;
let vm: VictoriaMetricsServer;
let child: ChildProcess;
let crew: MqttClient;
let loggers: MqttClient;
let sending: NodeJS.Timeout | undefined;
let log = '';
const notices: Array<{ transition: string; rule: string; alarm_id: string; subject: Record<string, string | null>; action: string }> = [];

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-db-watch-'));
  broker = await startMosquitto();
  vm = await startVictoriaMetrics({ dataDir: join(dir, 'vm-data') }); // ours: it outlives the first server process
  runtime = await writeQuietRuntimeFile(dir, broker.url, 'test-db-watch', [
    'presence: { every_s: 0.5 }',
    `database: { url: "${vm.url}", org: o, bucket: b, spool: { dir: ${join(dir, 'spool')} }, flush_interval_ms: 20, max_retries: 1, min_retry_delay_ms: 20, max_retry_delay_ms: 200, timeout_ms: 1000 }`,
    'tick_ms: 200',
    ...filesUnder(dir),
  ]);
  crew = await mqtt.connectAsync(broker.url, { clientId: 'test-db-watch-crew' });
  crew.on('message', (_t, p) => notices.push(JSON.parse(p.toString('utf8'))));
  await crew.subscribeAsync(`${S}/notify/instrumentation-crew`, { qos: 1 });
  child = spawn(process.execPath, ['bin/strainward.mjs', 'run', '-c', runtime, '--status-every', '0', '--log-format', 'lines'], { stdio: ['ignore', 'ignore', 'pipe'] });
  child.stderr!.on('data', (c) => { log += String(c); });
  await until('the processor to start (subscribed)', () => / INFO +started: structure brannock-mere/.test(log));
  // The span-1 logger at 40 MPa on flange-south-mid1 (below every limit), ten scans a second, dated
  // half a second back (never ahead of the processor's clock); the thermocouples every second.
  const g = (await loadRuntimeFile(runtime)).structure.groupsById.get('flange-south-mid1')!;
  const ch04 = readingsFromStress(g.model, [40], 14, Number.NaN, new Float64Array(1))[0];
  loggers = await mqtt.connectAsync(broker.url, { clientId: 'test-db-watch-loggers' });
  // A temperature before the first scan: results without one are doubtful (a temperature_stale alarm).
  const thermal = (ts: number) => loggers.publishAsync(`${S}/lg-thermal/scan`, JSON.stringify({ ts, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
  await thermal(Date.now() - 600);
  let k = 0;
  sending = setInterval(() => {
    const ts = Date.now() - 500;
    void loggers.publishAsync(`${S}/lg-span1/scan`, JSON.stringify({ ts, seq: k, values: { ch01: 0, ch02: 0, ch03: 0, ch04 } }), { qos: 1 });
    if (k++ % 10 === 0) void thermal(ts);
  }, 100);
}, 60_000);

afterAll(async () => {
  clearInterval(sending);
  await loggers?.endAsync();
  await crew?.endAsync();
  if (child && child.exitCode === null) {
    const exited = new Promise((r) => child.once('exit', r));
    child.kill('SIGTERM');
    await exited;
  }
  await vm?.stop();
  await broker?.stop();
  await rm(dir, { recursive: true, force: true });
});

describe('the database stopped and started under a running processor', () => {
  it('is a warning line, a component alarm and a status entry while down, and all of it clears once back', async () => {
    const first = await until('results written to the database', async () => {
      const s = await statusJson(runtime);
      return s.json.processors[0]?.details.database_reachable === true ? s : null;
    });
    expect(first.code).toBe(0);
    expect(first.json.processors[0].details.component_faults).toEqual([]);
    expect(first.json.processors[0].details.open_alarms.total).toBe(0);

    const { port, dataDir } = vm;
    await vm.stop();
    const lost = await until('the warning line', () => /WARNING database LOST: unreachable: (.*)$/m.exec(log));
    expect(lost[1]).toMatch(/results go to the spool \(spool [\d.]+ (B|KiB|MiB), \d+\.\d % of its limit, [\d.]+ (KiB|MiB|GiB) free on its disk\)/);
    const raised = await until('the component alarm', () => notices.find((n) => n.transition === 'raised' && n.rule === 'component_fault'));
    expect(raised.subject).toEqual({ kind: 'component', component: 'database' });
    expect(raised.action).toContain('Reported: unreachable');
    const down = await until('status to show it', async () => {
      const s = await statusJson(runtime);
      return s.json.processors[0]?.details.database_reachable === false && s.json.processors[0].details.component_faults.length > 0 ? s : null;
    });
    expect(down.code).toBe(0); // the processor is computing; the fault is an alarm of its own
    expect(down.json.processors[0].details.component_faults.map((f) => f.component)).toEqual(['database']);
    expect(down.json.processors[0].details.component_faults[0].failure).toMatch(/^unreachable: /);
    expect(down.json.processors[0].details.open_alarms).toEqual({ total: 1, by_level: { action: 0, alert: 0, advisory: 1 }, unacknowledged: 1 });
    expect(down.json.processors[0].details.spool_bytes).toBeGreaterThan(0);

    vm = await startVictoriaMetrics({ port, dataDir });
    await until('the warning line that it is back', () => /WARNING database BACK: results are written again/.test(log));
    const cleared = await until('the alarm to clear', () => notices.find((n) => n.transition === 'cleared' && n.alarm_id === raised.alarm_id));
    expect(cleared.rule).toBe('component_fault');
    const back = await until('status to show it back', async () => {
      const s = await statusJson(runtime);
      return s.json.processors[0]?.details.database_reachable === true && s.json.processors[0].details.component_faults.length === 0 ? s : null;
    });
    // Cleared but not yet acknowledged: still open (a crew must see that it happened), no longer a fault.
    expect(back.json.processors[0].details.open_alarms).toEqual({ total: 1, by_level: { action: 0, alert: 0, advisory: 1 }, unacknowledged: 1 });
    expect(log.match(/WARNING database LOST/g)).toHaveLength(1); // one line per outage, not one per write
  }, 120_000);
});
