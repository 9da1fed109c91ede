/**
 * `strainward run` stopped after a live run and started again, as processes, against a real
 * Mosquitto (started here on a free loopback port): it starts from the alarm state it saved,
 * a spike excursion held at the stop included, and the fatigue counts it saved. Results go to line-protocol files.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtemp, readdir, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startMosquitto } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';

const until = async (what: () => Promise<boolean> | boolean, ms: number): Promise<boolean> => {
  const deadline = Date.now() + ms;
  while (Date.now() < deadline) {
    if (await what()) return true;
    await new Promise((r) => setTimeout(r, 100));
  }
  return false;
};

function startRun(runtime: string): { child: ChildProcess; log: () => string } {
  const child = spawn(process.execPath, ['bin/strainward.mjs', 'run', '-c', runtime, '--status-every', '0'], { stdio: ['ignore', 'ignore', 'pipe'] });
  let log = '';
  child.stderr!.on('data', (c) => { log += c; });
  return { child, log: () => log };
}

async function stop(child: ChildProcess): Promise<number | null> {
  const exited = new Promise<number | null>((r) => child.once('exit', r));
  child.kill('SIGTERM');
  return exited;
}

const alarmLog = async (path: string) => (await readFile(path, 'utf8').catch(() => '')).trim().split('\n').filter(Boolean)
  .map((l) => JSON.parse(l)).filter((l) => l.type === 'transition').map((l) => `${l.message.transition} ${l.message.alarm_id}`);

describe('strainward run, restarted', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  beforeAll(async () => { broker = await startMosquitto(); });
  afterAll(async () => { await broker?.stop(); });

  it('starts again from the state of the live run before it, a held spike excursion included', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-restart-'));
    const runtime = await writeRuntimeFile(dir, broker.url, 'test-run-restart', filesUnder(dir));
    const statePath = join(dir, 'alarm-state.json');
    const logPath = join(dir, 'alarms.ndjson');
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-restart-loggers' });
    // A logger's clock: 100 ms between scans (published faster, so several would share a millisecond of wall clock).
    const t0 = Date.now() - 3000;
    const scan = (k: number, ch04: number) => pub.publishAsync('strainward/brannock-mere/lg-span1/scan',
      JSON.stringify({ ts: Math.min(t0 + 100 * k, Date.now()), seq: k, values: { ch01: 0, ch02: 0, ch03: 0, ch04 } }), { qos: 1 });

    const first = startRun(runtime);
    expect(await until(() => first.log().includes('"started"'), 20_000)).toBe(true);
    for (let k = 0; k < 20; k++) await scan(k, 100 + (k % 2));
    await scan(20, 400); // an excursion: the next reading decides whether it was a spike
    // Saved with the next batch (the silent loggers' no-data alarms come with the ticks).
    const held = async () => {
      const s = JSON.parse(await readFile(statePath, 'utf8').catch(() => '{}'));
      return s.keys?.['spike|c:lg-span1/ch04']?.hampel?.pending?.x === 400;
    };
    expect(await until(held, 15_000)).toBe(true);
    expect(await stop(first.child)).toBe(0);
    const saved = JSON.parse(await readFile(statePath, 'utf8'));
    expect(saved).toMatchObject({ format: 'strainward.alarm-state', version: 2, idFloor: 0, sequences: { 'lg-span1': { lastSeq: 20 } } });
    // Fatigue state saved at the stop: every result of the flange details seen (trusted or flagged, counted either way).
    const fatigueSeen = async () => {
      const f = JSON.parse(await readFile(join(dir, 'fatigue-state.json'), 'utf8'));
      const d = f.details['flange-north-butt-weld'];
      return d.samples + d.flaggedSamples;
    };
    const seenBefore = await fatigueSeen();
    expect(seenBefore).toBeGreaterThan(0);
    const raisedBefore = await alarmLog(logPath);
    expect(raisedBefore.length).toBeGreaterThan(0);
    expect(raisedBefore.every((t) => t.startsWith('raised ') && t.endsWith(':1'))).toBe(true);

    const second = startRun(runtime);
    expect(await until(() => second.log().includes('"started"') || second.child.exitCode !== null, 20_000)).toBe(true);
    expect(second.log()).toContain('"started"');
    expect(second.log()).not.toContain('alarm_state_reset');
    expect(second.log()).not.toContain('fatigue_state_reset');
    await scan(21, 100); // back at the level: the excursion held across the restart was a spike
    const spike = 'raised brannock-mere:spike:c:lg-span1/ch04:1';
    expect(await until(async () => (await alarmLog(logPath)).includes(spike), 15_000)).toBe(true);
    expect(await stop(second.child)).toBe(0);
    await pub.endAsync();
    // Fatigue continued from the saved state: the scan after the restart added to it; each stop wrote the figures.
    expect(await fatigueSeen()).toBeGreaterThan(seenBefore);
    const lines = (await Promise.all((await readdir(join(dir, 'lp'))).map((f) => readFile(join(dir, 'lp', f), 'utf8')))).join('');
    expect(lines.match(/^sw_fatigue,detail=flange-north-butt-weld,group=flange-north-mid1,structure=brannock-mere,zone=span-1 /gm)).toHaveLength(2);
    // The alarms raised before the stop were restored, not raised again under new or repeated ids.
    const after = await alarmLog(logPath);
    expect(after.filter((t) => t.startsWith('raised ')).sort()).toEqual([...raisedBefore, spike].sort());
  }, 90_000);
});
