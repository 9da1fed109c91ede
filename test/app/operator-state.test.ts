import { Subject, VirtualTimeScheduler } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { startOperatorState } from '../../src/app/operator-state.js';
import { GroupStateSchema } from '../../src/app/state-topics/group-state.js';
import { openAlarmsMessage, openAlarmsState, OpenAlarmsStateSchema } from '../../src/app/state-topics/open-alarms.js';
import { RetainedPublisher } from '../../src/app/state-topics/retained-publisher.js';
import type { Alarm, AlarmTransition, ComponentFault } from '../../src/alarms/types.js';
import type { GroupResult } from '../../src/model/result.js';
import type { FrameOutput } from '../../src/pipeline/process-frames.js';

const T0 = Date.UTC(2026, 4, 1, 12, 0, 0);

function result(groupId: string, timeMs: number, vonMises: number): GroupResult {
  return {
    structureId: 'deck', groupId, zone: 'span-1', loggerId: 'lg', timeMs, seq: 7, values: { von_mises_MPa: vonMises },
    elementStrainMicro: {}, flags: groupId === 'g2' ? ['temperature_stale'] : [],
  };
}

function frame(...results: GroupResult[]): FrameOutput<unknown> {
  return { kind: 'frame', frame: {} as never, message: null, results, temperatures: {} };
}

function alarm(id: string, level: string, state: Alarm['state'], acknowledgement: Alarm['acknowledgement'] = null): Alarm {
  return {
    id, key: `k|${id}`, structureId: 'deck', zone: 'span-1', alarmClass: 'structural', ruleId: 'vm', subject: { kind: 'group', groupId: 'g1' },
    location: 'midspan', quantity: 'von_mises_MPa', value: 60, limit: 55, units: 'MPa', level, levelIndex: level === 'alert' ? 1 : 0, state,
    sinceMs: T0, lastChangeMs: T0 + 1000, trendPerS: null, action: 'look', raiseCount: 1, repeatCount: 0, tier: 0, tierSinceMs: T0,
    flapping: false, suppressedCount: 0, acknowledgement,
  };
}

function setUp(stateTopics = { interval_s: 5, groups_topic: 's/{structure}/state/groups/{group}', alarms_topic: 's/{structure}/state/alarms', max_message_bytes: 200_000 }) {
  const scheduler = new VirtualTimeScheduler();
  const sent: Array<{ topic: string; body: Record<string, unknown>; retain: boolean | undefined }> = [];
  const faults$ = new Subject<ComponentFault>();
  const processed$ = new Subject<FrameOutput<unknown>>();
  const op = startOperatorState({
    stateTopics, structureId: 'deck', processor: 'sw-1', levels: ['advisory', 'alert', 'action'],
    publish: async (topic, payload, opts) => { sent.push({ topic, body: JSON.parse(String(payload)), retain: opts?.retain }); },
    componentFaults$: faults$, now: () => T0 + scheduler.now(), scheduler, onError: () => {},
  });
  op.attach(processed$);
  return { scheduler, sent, faults$, processed$, op };
}

const flushed = () => new Promise((r) => setTimeout(r, 0));

describe('operator state: retained group states at a low rate', () => {
  it('publishes each group\'s latest result once per interval, only when it has a newer one', async () => {
    const { scheduler, sent, processed$, op } = setUp();
    // Virtual time in steps, the broker's answers (promises) settling between them as they would.
    const advanceTo = async (ms: number) => { scheduler.maxFrames = ms; scheduler.flush(); await flushed(); };
    processed$.next(frame(result('g1', T0 + 100, 10), result('g2', T0 + 100, 20)));
    processed$.next(frame(result('g1', T0 + 200, 11)));
    await advanceTo(6000);
    processed$.next(frame(result('g1', T0 + 6000, 12)));
    await advanceTo(16_000);
    await op.stop();
    // At 5 s: g1 (its latest, 11 MPa) and g2; at 10 s: g1 only (12 MPa, its one newer result); at 15 s: nothing new.
    expect(sent.map((m) => `${m.topic} ${(m.body.values as Record<string, number>).von_mises_MPa} ${m.body.published_at}`)).toEqual([
      's/deck/state/groups/g1 11 2026-05-01T12:00:05.000Z',
      's/deck/state/groups/g2 20 2026-05-01T12:00:05.000Z',
      's/deck/state/groups/g1 12 2026-05-01T12:00:10.000Z',
    ]);
    expect(sent.every((m) => m.retain === true)).toBe(true);
    const g2 = GroupStateSchema.parse(sent[1].body);
    expect(g2).toEqual({
      schema: 'strainward.group-state/1', structure: 'deck', processor: 'sw-1', group: 'g2', zone: 'span-1', logger: 'lg',
      time: '2026-05-01T12:00:00.100Z', seq: 7, published_at: '2026-05-01T12:00:05.000Z', flags: ['temperature_stale'], doubtful: true,
      values: { von_mises_MPa: 20 },
    });
  });

  it('an empty groups topic publishes no group state', async () => {
    const { scheduler, sent, processed$, op } = setUp({ interval_s: 5, groups_topic: '', alarms_topic: '', max_message_bytes: 200_000 });
    processed$.next(frame(result('g1', T0, 10)));
    scheduler.schedule(() => { void op.stop(); }, 11_000);
    scheduler.flush();
    await flushed();
    expect(sent).toEqual([]);
  });
});

describe('operator state: the retained list of open alarms', () => {
  it('is published at start and on every transition; closed alarms leave it; counts by level, most severe first', async () => {
    const { sent, op } = setUp();
    op.seedAlarms([alarm('a1', 'advisory', 'active_unacknowledged'), alarm('old', 'advisory', 'closed')]);
    await flushed();
    const t = (kind: AlarmTransition['kind'], a: Alarm): AlarmTransition => ({ kind, atMs: T0 + 2000, alarm: a });
    op.onTransitions([t('raised', alarm('a2', 'alert', 'active_unacknowledged'))]);
    await flushed();
    op.onTransitions([t('acknowledged', alarm('a1', 'advisory', 'active_acknowledged', { user: 'duty-engineer-1', reason: 'seen', atMs: T0 + 3000 }))]);
    await flushed();
    op.onTransitions([t('cleared', alarm('a2', 'alert', 'closed'))]);
    await flushed();
    op.onTransitions([]); // nothing changed: nothing sent
    await flushed();
    const lists = sent.map((m) => OpenAlarmsStateSchema.parse(m.body));
    expect(sent.every((m) => m.topic === 's/deck/state/alarms' && m.retain === true)).toBe(true);
    expect(lists.map((l) => l.alarms.map((a) => `${a.alarm_id}:${a.state}:${a.acknowledged_by ?? '-'}`))).toEqual([
      ['a1:active_unacknowledged:-'],
      ['a2:active_unacknowledged:-', 'a1:active_unacknowledged:-'], // the alert first
      ['a2:active_unacknowledged:-', 'a1:active_acknowledged:duty-engineer-1'],
      ['a1:active_acknowledged:duty-engineer-1'],
    ]);
    expect(lists[3]).toMatchObject({ schema: 'strainward.open-alarms/1', structure: 'deck', processor: 'sw-1', count: 1 });
    expect(lists[3].alarms[0]).toMatchObject({ acknowledged_at: '2026-05-01T12:00:03.000Z', since: '2026-05-01T12:00:00.000Z', limit: 55, units: 'MPa', subject: { kind: 'group', group_id: 'g1' } });
    expect(op.counters().open_alarms).toEqual({ total: 1, by_level: { action: 0, alert: 0, advisory: 1 }, unacknowledged: 0 });
    await op.stop();
  });

  it('a list over max_message_bytes leaves out the least severe entries and says how many are open', () => {
    const who = { structure: 'deck', processor: 'sw-1' };
    const alarms = Array.from({ length: 10 }, (_, i) => alarm(`a${i}`, 'advisory', 'active_unacknowledged'));
    const whole = openAlarmsMessage(alarms, who, T0, 200_000);
    expect(whole).toBe(JSON.stringify(openAlarmsState(alarms, who, T0)));
    const oneEntry = JSON.stringify(OpenAlarmsStateSchema.parse(JSON.parse(whole)).alarms[0]).length;
    const limit = whole.length - 3 * oneEntry; // three entries too long
    const cut = openAlarmsMessage(alarms, who, T0, limit);
    expect(Buffer.byteLength(cut)).toBeLessThanOrEqual(limit);
    const parsed = OpenAlarmsStateSchema.parse(JSON.parse(cut));
    expect(parsed).toMatchObject({ count: 10, listed: 7 });
    expect(parsed.alarms.map((a) => a.alarm_id)).toEqual(['a0', 'a1', 'a2', 'a3', 'a4', 'a5', 'a6']);
    expect(OpenAlarmsStateSchema.parse(JSON.parse(openAlarmsMessage(alarms, who, T0, 100)))).toMatchObject({ count: 10, listed: 0, alarms: [] });
  });

  it('carries the component faults reported, for the presence message', async () => {
    const { faults$, op } = setUp();
    faults$.next({ type: 'component', component: 'database', failure: 'unreachable', atMs: T0 });
    expect(op.counters().component_faults).toEqual([{ component: 'database', failure: 'unreachable', since: '2026-05-01T12:00:00.000Z' }]);
    faults$.next({ type: 'component', component: 'database', failure: null, atMs: T0 + 1 });
    expect(op.counters().component_faults).toEqual([]);
    await op.stop();
  });
});

describe('retained publisher: only the newest body matters', () => {
  it('keeps one publish per topic in flight; bodies sent meanwhile collapse into the newest', async () => {
    const answers: Array<() => void> = [];
    const sent: string[] = [];
    const p = new RetainedPublisher((topic, payload) => {
      sent.push(`${topic}=${String(payload)}`);
      return new Promise<void>((r) => { answers.push(r); });
    }, () => {});
    p.send('a', () => '1');
    p.send('a', () => '2');
    p.send('a', () => '3');
    p.send('b', () => 'x');
    expect(sent).toEqual(['a=1', 'b=x']); // the broker has not answered: 2 and 3 wait, and 3 replaces 2
    answers.shift()!();
    await flushed();
    await flushed();
    expect(sent).toEqual(['a=1', 'b=x', 'a=3']);
    for (const a of answers.splice(0)) a();
    await p.idle(1000);
  });

  it('a failed publish is reported and the next body still goes', async () => {
    const errors: string[] = [];
    let calls = 0;
    const p = new RetainedPublisher(async () => { if (calls++ === 0) throw new Error('broker away'); }, (topic, err) => errors.push(`${topic}: ${(err as Error).message}`));
    p.send('a', () => '1');
    await p.idle(1000);
    p.send('a', () => '2');
    await p.idle(1000);
    expect(errors).toEqual(['a: broker away']);
    expect(calls).toBe(2);
  });
});
