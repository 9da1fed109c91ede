import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Subject } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { attachAlarms, openAlarmFiles, toAlarmInputs, type AckEvent, type AlarmWiringDeps } from '../../src/app/alarms-wiring.js';
import { parseAckPayload, type AlarmLog, type AlarmLogLine } from '../../src/alarms/index.js';
import type { Point, PointWriter } from '../../src/model/point.js';
import type { GroupResult } from '../../src/model/result.js';
import type { FrameOutput } from '../../src/pipeline/process-frames.js';
import { config, configInput, frame, lookups, result, T0 } from '../alarms/fixtures.js';

/** In-memory alarm log (the NDJSON file adapter has its own tests): lines in call order. */
function memoryLog(): AlarmLog & { lines: AlarmLogLine['type'][]; closed: boolean } {
  const lines: AlarmLogLine['type'][] = [];
  const log = {
    lines, closed: false,
    transition: async () => { lines.push('transition'); },
    refusal: async () => { lines.push('refusal'); },
    delivery: async () => { lines.push('delivery'); },
    close: async () => { log.closed = true; },
  };
  return log;
}

/** One scan of LG-01 (channel values vary so the flatline check stays quiet) and its group result. */
type ScanOutput = Extract<FrameOutput<unknown>, { kind: 'frame' }>;
function scan(tMs: number, vm: number): ScanOutput {
  const r: GroupResult = result(tMs, vm);
  return { kind: 'frame', frame: frame(tMs, { ch01: 100 + vm, ch02: -50 - vm }), message: null, results: [r], temperatures: {} };
}
const tick = (nowMs: number): FrameOutput<unknown> => ({ kind: 'tick', nowMs });

function harness(over: Partial<AlarmWiringDeps> = {}) {
  const processed$ = new Subject<FrameOutput<unknown>>();
  const acks$ = new Subject<AckEvent>();
  const sink = new MemorySink();
  const log = memoryLog();
  const wiring = attachAlarms(processed$, acks$, { cfg: config(), lookups, now: () => 0, sink, log, ...over });
  const ack = (alarmId: string, user: string, atMs: number) =>
    acks$.next(parseAckPayload(JSON.stringify({ alarm_id: alarmId, user, reason: 'seen on site' }), atMs, user));
  const finish = async () => { processed$.complete(); await wiring.close(); };
  /** A scan as the pipeline gives it: received at once, then computed. */
  const push = (s: ScanOutput) => { processed$.next({ kind: 'received', frame: s.frame }); processed$.next(s); };
  return { processed$, acks$, sink, log, wiring, ack, finish, push };
}

const transitionsOf = (points: readonly Point[]) => points.filter((p) => p.measurement === 'sw_alarm').map((p) => `${p.tags.rule}:${p.tags.transition}:${p.tags.level}`);

describe('toAlarmInputs', () => {
  it('gives a received frame as a frame, a computed one as its results in order; a tick as a tick', () => {
    const out: ScanOutput = { ...scan(T0, 10), results: [result(T0, 1), result(T0, 2, [], 'S2-MID-G2')] };
    expect(toAlarmInputs({ kind: 'received', frame: out.frame }).map((i) => i.type)).toEqual(['frame']);
    expect(toAlarmInputs(out).map((i) => (i.type === 'result' ? `result ${i.result.groupId}` : i.type))).toEqual(['result S1-MID-G2', 'result S2-MID-G2']);
    expect(toAlarmInputs(tick(T0 + 5))).toEqual([{ type: 'tick', nowMs: T0 + 5 }]);
    expect(toAlarmInputs({ ...scan(T0, 1), results: [] })).toEqual([]);
  });
});

describe('attachAlarms', () => {
  it('raises, changes level, takes an acknowledgement and clears with hysteresis, writing and delivering each in order', async () => {
    const h = harness();
    // vm-girder thresholds 150 / 200 / 250 MPa, clear_margin 10 (test/alarms/fixtures.ts).
    h.push(scan(T0, 160));
    h.push(scan(T0 + 1000, 210));
    const id = h.wiring.visibleAlarms()[0].id;
    expect(id).toBe('brannock-mere:vm-girder:g:S1-MID-G2:1');
    h.ack(id, 'eng-ashdown', T0 + 1500);
    h.push(scan(T0 + 2000, 195)); // below 200 but not below 200 - 10: stays alert
    h.push(scan(T0 + 3000, 145)); // below 190: back to advisory
    h.push(scan(T0 + 4000, 141)); // below 150 but not below 140: stays
    h.push(scan(T0 + 5000, 139.9)); // below 140: clears
    await h.finish();
    expect(transitionsOf(h.sink.points)).toEqual([
      'vm-girder:raised:advisory', 'vm-girder:level_changed:alert', 'vm-girder:acknowledged:alert',
      'vm-girder:level_changed:advisory', 'vm-girder:cleared:advisory',
    ]);
    expect(h.sink.points.map((p) => p.timeMs)).toEqual([T0, T0 + 1000, T0 + 1500, T0 + 3000, T0 + 5000]);
    expect(h.sink.points[0].fields).toMatchObject({ value: 160, limit: 150, level_index: 0, tier: 0 });
    const mqtt = h.wiring.recorded().map((r) => `${r.channel} ${r.target} ${JSON.parse(r.body).transition}`);
    expect(mqtt).toEqual(['raised', 'level_changed', 'acknowledged', 'level_changed', 'cleared'].map((k) => `mqtt strainward/brannock-mere/notify/deck-crew ${k}`));
    const c = h.wiring.counts();
    expect(c).toMatchObject({ batches: 5, refusals: 0, deliveries: { delivered: 5, failed: 0 }, active: 0, visible: 0 });
    expect(c.transitions).toMatchObject({ raised: 1, level_changed: 2, acknowledged: 1, cleared: 1, escalated: 0 });
    expect(c.inputs).toBe(6 * 2 + 1); // six frames with one result each, one acknowledgement
    expect(h.log.lines.filter((l) => l === 'transition')).toHaveLength(5);
    expect(h.log.closed).toBe(true);
  });

  it('escalates an unacknowledged alarm on ticks and raises no-data for a silent logger', async () => {
    const h = harness();
    h.push(scan(T0, 160));
    h.processed$.next(tick(T0 + 20_000)); // LG-01 expects a scan every 10 s; silent after 3 intervals = 30 s
    h.processed$.next(tick(T0 + 600_000)); // escalation.after_s = 600
    await h.finish();
    expect(transitionsOf(h.sink.points)).toEqual(['vm-girder:raised:advisory', 'no_data:raised:advisory', 'vm-girder:escalated:advisory']);
    const escalated = h.sink.points[2];
    expect(escalated.fields.tier).toBe(1);
    expect(escalated.timeMs).toBe(T0 + 600_000);
    expect(h.sink.points[1].tags).toMatchObject({ alarm_class: 'health', logger: 'LG-01' });
    expect(h.sink.points[1].fields.value).toBeCloseTo(600, 9); // silence, s
    // The escalation tells the new tier only (on-call, a log recipient): no extra MQTT message.
    expect(h.wiring.recorded().map((r) => r.target)).toEqual(['strainward/brannock-mere/notify/deck-crew', 'strainward/brannock-mere/notify/instr-crew']);
    expect(h.wiring.counts().deliveries).toEqual({ delivered: 3, failed: 0 });
  });

  it('records and counts refused acknowledgements: a bad command, a user not allowed, an unknown alarm', async () => {
    const h = harness();
    h.push(scan(T0, 160));
    const id = h.wiring.visibleAlarms()[0].id;
    h.acks$.next(parseAckPayload('{"alarm_id": "x"}', T0 + 1, 'eng-ashdown'));
    h.ack(id, 'tech-morrow', T0 + 2); // health-only user
    h.ack('brannock-mere:nothing:1', 'eng-ashdown', T0 + 3);
    await h.finish();
    expect(h.wiring.counts().refusals).toBe(3);
    expect(h.log.lines.filter((l) => l === 'refusal')).toHaveLength(3);
    expect(h.wiring.visibleAlarms()[0].state).toBe('active_unacknowledged');
  });

  it('is deterministic: the injected clock changes delivery records only, never points or messages', async () => {
    const run = async (now: () => number) => {
      const h = harness({ now });
      for (let k = 0; k < 30; k++) h.push(scan(T0 + k * 1000, 100 + 10 * k));
      h.processed$.next(tick(T0 + 700_000));
      await h.finish();
      return { points: h.sink.points, sent: h.wiring.recorded() };
    };
    let wall = 5e12;
    const a = await run(() => 0);
    const b = await run(() => (wall += 17));
    expect(b).toEqual(a);
    expect(transitionsOf(a.points).length).toBeGreaterThanOrEqual(4);
  });

  it('still tells the crews when the point sink and the snapshot file fail, and counts both', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-wiring-'));
    await writeFile(join(dir, 'not-a-dir'), 'x');
    const failing: PointWriter = { write: async () => { throw new Error('database gone'); } };
    const errors: string[] = [];
    const h = harness({ sink: failing, snapshotPath: join(dir, 'not-a-dir', 'state.json'), onError: (e) => errors.push(e) });
    h.push(scan(T0, 260));
    await h.finish();
    expect(h.wiring.recorded()).toHaveLength(1);
    expect(h.wiring.counts().errors).toEqual({ snapshot: 1, points: 1, log: 0, stream: 0 });
    expect(errors).toEqual(['alarm_snapshot_failed', 'alarm_points_failed']);
  });

  const stateDeps = { now: () => T0, log: () => {} };
  it('tags points, records webhooks when asked, persists the snapshot and restores it', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-wiring-'));
    const cfg = config({
      recipients: [...configInput().recipients!, { id: 'desk', kind: 'control_room', channels: [{ kind: 'webhook', url: 'http://127.0.0.1:9/desk' }] }],
      routes: [{ match: { alarm_class: ['structural'] }, tiers: [['deck-crew', 'desk']] }],
    });
    const files = await openAlarmFiles(cfg, lookups, join(dir, 'state.json'), join(dir, 'alarms.ndjson'), stateDeps);
    expect(files.snapshotJson).toBeUndefined();
    const h = harness({ cfg, webhook: 'record', pointTags: { run: 'r7' }, ...files });
    h.push(scan(T0, 205));
    await h.finish();
    expect(h.sink.points[0].tags).toMatchObject({ run: 'r7', transition: 'raised', level: 'alert' });
    expect(h.wiring.recorded().map((r) => `${r.channel} ${r.target}`).sort()).toEqual(['mqtt strainward/brannock-mere/notify/deck-crew', 'webhook http://127.0.0.1:9/desk']);
    const logLines = (await readFile(join(dir, 'alarms.ndjson'), 'utf8')).trim().split('\n').map((l) => JSON.parse(l).type);
    expect(logLines).toEqual(['transition', 'delivery', 'delivery']);

    const again = await openAlarmFiles(cfg, lookups, join(dir, 'state.json'), join(dir, 'alarms.ndjson'), stateDeps);
    const h2 = harness({ cfg, ...again });
    expect(h2.wiring.visibleAlarms().map((a) => `${a.id} ${a.level} ${a.value}`)).toEqual(['brannock-mere:vm-girder:g:S1-MID-G2:1 alert 205']);
    await h2.finish();

  });

  it('close() stops taking acknowledgements, drains, and is idempotent', async () => {
    const h = harness();
    h.push(scan(T0, 160));
    h.processed$.complete();
    const first = h.wiring.close();
    expect(h.wiring.close()).toBe(first);
    await first;
    h.ack('brannock-mere:vm-girder:g:S1-MID-G2:1', 'eng-ashdown', T0 + 5);
    expect(h.wiring.counts()).toMatchObject({ batches: 1, refusals: 0, active: 1 });
    expect(h.wiring.subscription.closed).toBe(true);
  });
});
