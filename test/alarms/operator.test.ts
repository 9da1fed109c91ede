import { describe, expect, it } from 'vitest';
import { TestScheduler } from 'rxjs/testing';
import { map, merge, of, take, type Observable } from 'rxjs';
import { alarmBatches, alarms, alarmTicks, type AlarmBatch } from '../../src/alarms/operator.js';
import type { AlarmInput, AlarmTransition } from '../../src/alarms/types.js';
import { config, frame, lookups, result } from './fixtures.js';

/** Virtual time starts at 0 ms: result and frame times are the scheduler's frame numbers. */
function newScheduler(): TestScheduler {
  return new TestScheduler((a, b) => expect(a).toEqual(b));
}
const summary = (t: AlarmTransition) => `${t.kind}:${t.alarm.ruleId}:${t.alarm.level}:${t.alarm.tier}:${t.atMs}`;
/** Without loggers: no no-data alarms in tests about structural escalation. */
const quietLookups = { ...lookups, loggers: new Map() };
const once = (ms: number, input: AlarmInput, ts: TestScheduler): Observable<AlarmInput> =>
  ts.createColdObservable(`${ms}ms a|`, { a: input });

describe('alarms operator (virtual time)', () => {
  it('on-delay: an excursion shorter than on_delay_s never raises; a longer one raises on_delay_s after it began; off-delay before clearing', () => {
    const cfg = config({
      rules: [{ id: 'vm', kind: 'limit', quantity: 'von_mises_MPa', scope: { kind: 'structure' }, direction: 'above',
        thresholds: [{ level: 'alert', value: 200 }], clear_margin: 5, on_delay_s: 3, off_delay_s: 4, action: 'Inspect.' }],
    });
    const ts = newScheduler();
    ts.run(({ cold, expectObservable }) => {
      // one result per second: 1-2 s a brief excursion, 5-14 s sustained, below threshold - margin from 15 s
      const values = [100, 210, 210, 100, 100, 210, 210, 210, 210, 210, 210, 210, 210, 210, 210, 150, 150, 150, 150, 150, 150];
      const marbles = values.map((_, i) => (i === 0 ? 'a' : '999ms a')).join(' ') + '|';
      let i = 0;
      const src = cold(marbles).pipe(map((): AlarmInput => ({ type: 'result', result: result(i * 1000, values[i++]) })));
      expectObservable(src.pipe(alarms(cfg, lookups), map(summary))).toBe('8000ms a 10999ms b 1000ms |', {
        a: 'raised:vm:alert:0:8000',
        b: 'cleared:vm:alert:0:19000',
      });
    });
  });

  it('escalates an unacknowledged alarm one tier every escalation.after_s and stops at the last tier', () => {
    const ts = newScheduler();
    ts.run(({ expectObservable }) => {
      const inputs = merge(
        once(0, { type: 'result', result: result(0, 210) }, ts),
        alarmTicks(10_000, ts).pipe(take(20)),
      );
      expectObservable(inputs.pipe(alarms(config({ escalation: { after_s: 60 } }), quietLookups), map(summary))).toBe(
        'a 59999ms b 59999ms c 79999ms |',
        { a: 'raised:vm-girder:alert:0:0', b: 'escalated:vm-girder:alert:1:60000', c: 'escalated:vm-girder:alert:2:120000' },
      );
    });
  });

  it('an acknowledgement stops escalation', () => {
    const ts = newScheduler();
    ts.run(({ expectObservable }) => {
      const ack: AlarmInput = { type: 'ack', alarmId: 'brannock-mere:vm-girder:g:S1-MID-G2:1', user: 'eng-ashdown', reason: 'crew sent', atMs: 30_000 };
      const inputs = merge(once(0, { type: 'result', result: result(0, 210) }, ts), once(30_000, ack, ts), alarmTicks(10_000, ts).pipe(take(20)));
      expectObservable(inputs.pipe(alarms(config({ escalation: { after_s: 60 } }), quietLookups), map(summary))).toBe(
        'a 29999ms b 169999ms |',
        { a: 'raised:vm-girder:alert:0:0', b: 'acknowledged:vm-girder:alert:0:30000' },
      );
    });
  });

  it('no-data: a logger never heard from raises after missing_after_intervals x interval; its first frame clears it', () => {
    const ts = newScheduler();
    ts.run(({ expectObservable }) => {
      // LG-01: expected interval 10 s, missing after 3 intervals = 30 s; ticks every 5 s from 5 s
      const inputs = merge(
        alarmTicks(5_000, ts).pipe(take(12)),
        once(50_000, { type: 'frame', frame: frame(50_000, { ch01: 1, ch02: 2 }) }, ts),
      );
      expectObservable(inputs.pipe(alarms(config(), lookups), map(summary))).toBe('35000ms a 14999ms b 9999ms |', {
        a: 'raised:no_data:advisory:0:35000',
        b: 'cleared:no_data:advisory:0:50000',
      });
    });
  });

  it('silence is never all-clear: a structural alarm stays up while no results arrive', () => {
    const ts = newScheduler();
    ts.run(({ expectObservable }) => {
      const inputs = merge(once(0, { type: 'result', result: result(0, 260) }, ts), alarmTicks(10_000, ts).pipe(take(6)));
      const out = inputs.pipe(alarms(config({ escalation: { after_s: 1000 } }), lookups), map(summary));
      // only the raise and the no-data alarm of the silent logger (silent since the first tick at 10 s)
      expectObservable(out).toBe('a 39999ms b 19999ms |', { a: 'raised:vm-girder:action:0:0', b: 'raised:no_data:advisory:0:40000' });
    });
  });

  it('batches carry the refusals and a snapshot that restores the alarms', () => {
    const ts = newScheduler();
    ts.run(({ cold, expectObservable }) => {
      const src = cold<AlarmInput>('a b|', {
        a: { type: 'result', result: result(0, 210) },
        b: { type: 'ack', alarmId: 'nope', user: 'eng-ashdown', reason: 'x', atMs: 1 },
      });
      const out = src.pipe(
        alarmBatches(config(), lookups),
        map((b) => `${b.transitions.length}/${b.refusals.map((r) => r.code).join()}/${Object.keys(JSON.parse(b.snapshot()).alarms).length}`),
      );
      expectObservable(out).toBe('a b|', { a: '1//1', b: '0/unknown_alarm/1' });
    });
  });

  it('empty source: completes with nothing; an upstream error passes through', () => {
    newScheduler().run(({ cold, expectObservable }) => {
      expectObservable(cold<AlarmInput>('|').pipe(alarms(config(), lookups))).toBe('|');
      const err = cold<AlarmInput>('a #', { a: { type: 'result', result: result(0, 210) } }, new Error('broker gone'));
      expectObservable(err.pipe(alarms(config(), quietLookups), map(summary))).toBe('a #', { a: 'raised:vm-girder:alert:0:0' }, new Error('broker gone'));
    });
  });

  it('each subscription has its own engine; a restored snapshot carries the alarm over', () => {
    const raise$ = of<AlarmInput>({ type: 'result', result: result(0, 210) });
    const op = alarmBatches(config(), quietLookups);
    const first: AlarmBatch[] = [];
    const second: AlarmBatch[] = [];
    raise$.pipe(op).subscribe((b) => first.push(b));
    raise$.pipe(op).subscribe((b) => second.push(b));
    expect([first.map((b) => b.transitions[0].kind), second.map((b) => b.transitions[0].kind)]).toEqual([['raised'], ['raised']]);
    const clear$ = of<AlarmInput>({ type: 'result', result: result(1000, 100) });
    const fresh: string[] = [];
    clear$.pipe(alarms(config(), quietLookups), map(summary)).subscribe((t) => fresh.push(t));
    const restored: string[] = [];
    clear$.pipe(alarms(config(), quietLookups, { snapshotJson: first[0].snapshot() }), map(summary)).subscribe((t) => restored.push(t));
    expect({ fresh, restored }).toEqual({ fresh: [], restored: ['cleared:vm-girder:alert:0:1000'] });
  });
});
