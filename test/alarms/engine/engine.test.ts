import { describe, expect, it } from 'vitest';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import type { AlarmInput, AlarmTransition } from '../../../src/alarms/types.js';
import { config, frame, lookups, result, T0 } from '../fixtures.js';

function run(inputs: AlarmInput[], cfg = config()) {
  const engine = createAlarmEngine(cfg, lookups);
  const transitions: AlarmTransition[] = [];
  const refusals = [];
  for (const i of inputs) {
    const o = engine.step(i);
    transitions.push(...o.transitions);
    refusals.push(...o.refusals);
  }
  return { engine, transitions, refusals };
}
const res = (s: number, vm: number, flags: Parameters<typeof result>[2] = []): AlarmInput => ({ type: 'result', result: result(T0 + s * 1000, vm, flags) });

describe('alarm engine: limit rule', () => {
  it('raises at the first threshold with everything a crew needs', () => {
    const { transitions } = run([res(0, 100), res(1, 151)]);
    expect(transitions).toHaveLength(1);
    const a = transitions[0].alarm;
    expect(transitions[0].kind).toBe('raised');
    expect(a).toMatchObject({
      structureId: 'brannock-mere', zone: 'span-1', location: 'span 1 midspan, girder G2 bottom flange',
      quantity: 'von_mises_MPa', value: 151, limit: 150, units: 'MPa', level: 'advisory', levelIndex: 0,
      alarmClass: 'structural', state: 'active_unacknowledged', sinceMs: T0 + 1000,
      id: 'brannock-mere:vm-girder:g:S1-MID-G2:1',
    });
  });

  it('changes level up and down, clearing only below threshold minus margin', () => {
    const { transitions } = run([res(0, 210), res(1, 260), res(2, 245), res(3, 241), res(4, 239), res(5, 145), res(6, 139)]);
    expect(transitions.map((t) => `${t.kind}:${t.alarm.level}`)).toEqual([
      'raised:alert', 'level_changed:action', 'level_changed:alert', 'level_changed:advisory', 'cleared:advisory',
    ]);
    expect(transitions[2].alarm.value).toBe(239);
    expect(transitions[4].alarm).toMatchObject({ state: 'cleared_unacknowledged', value: 139, limit: 150 });
  });

  it('flagged results neither raise nor clear a structural alarm, and raise the health alarm instead', () => {
    const { transitions, engine } = run([res(0, 300, ['temperature_stale']), res(1, 160), res(2, 10, ['residual_high'])]);
    expect(transitions.map((t) => `${t.kind}:${t.alarm.ruleId}`)).toEqual([
      'raised:temperature_stale', 'cleared:temperature_stale', 'raised:vm-girder', 'raised:residual_high',
    ]);
    expect(engine.visibleAlarms().find((a) => a.ruleId === 'vm-girder')?.state).toBe('active_unacknowledged');
  });

  it('a cleared alarm nobody acknowledged stays visible and a re-raise merges into it', () => {
    const { transitions, engine } = run([res(0, 160), res(1, 100), res(2, 170)]);
    expect(transitions.map((t) => t.kind)).toEqual(['raised', 'cleared', 'raised']);
    expect(transitions[2].alarm.id).toBe(transitions[0].alarm.id);
    expect(transitions[2].alarm.raiseCount).toBe(2);
    expect(engine.visibleAlarms()).toHaveLength(1);
  });

  it('acknowledges for allowed users, refuses others with a reason, closes on clear', () => {
    const id = 'brannock-mere:vm-girder:g:S1-MID-G2:1';
    const { transitions, refusals, engine } = run([
      res(0, 160),
      { type: 'ack', alarmId: id, user: 'tech-morrow', reason: 'seen', atMs: T0 + 1500 },
      { type: 'ack', alarmId: id, user: 'eng-ashdown', reason: 'crew on site', atMs: T0 + 2000 },
      res(3, 100),
    ]);
    expect(refusals).toEqual([expect.objectContaining({ code: 'user_not_allowed', user: 'tech-morrow' })]);
    expect(transitions.map((t) => `${t.kind}:${t.alarm.state}`)).toEqual([
      'raised:active_unacknowledged', 'acknowledged:active_acknowledged', 'cleared:closed',
    ]);
    expect(engine.visibleAlarms()).toHaveLength(0);
    const again = engine.step(res(4, 160)).transitions[0];
    expect(again.alarm.id).toBe('brannock-mere:vm-girder:g:S1-MID-G2:2');
  });

  it('below rules and zone scope', () => {
    const cfg = config({
      rules: [{
        id: 'cold', kind: 'limit', quantity: 'temperature_degC', scope: { kind: 'zone', zone: 'span-2' },
        direction: 'below', thresholds: [{ level: 'advisory', value: -10 }, { level: 'alert', value: -20 }], clear_margin: 2,
        action: 'Check bearings for restraint.',
      }],
    });
    const r = (s: number, temp: number, g: string) => {
      const x = result(T0 + s * 1000, 0, [], g);
      x.values = { temperature_degC: temp };
      return { type: 'result', result: x } as const;
    };
    const { transitions } = run([r(0, -25, 'S1-MID-G2'), r(1, -21, 'S2-MID-G2'), r(2, -9, 'S2-MID-G2'), r(3, -7.9, 'S2-MID-G2')], cfg);
    expect(transitions.map((t) => `${t.kind}:${t.alarm.level}:${t.alarm.limit}`)).toEqual([
      'raised:alert:-20', 'level_changed:advisory:-10', 'cleared:advisory:-10',
    ]);
  });
});

describe('alarm engine: snapshot', () => {
  it('restores a raised alarm after a restart', () => {
    const { engine } = run([res(0, 260)]);
    const restored = createAlarmEngine(config(), lookups, engine.snapshot());
    expect(restored.visibleAlarms()).toEqual(engine.visibleAlarms());
    const t = restored.step(res(1, 100)).transitions;
    expect(t.map((x) => x.kind)).toEqual(['cleared']);
  });
  it('an alarm whose rule was removed from the configuration stays visible until acknowledged', () => {
    const { engine } = run([res(0, 260)]);
    const restored = createAlarmEngine(config({ rules: [] }), lookups, engine.snapshot());
    expect(restored.visibleAlarms().map((a) => a.state)).toEqual(['cleared_unacknowledged']);
    const ack = restored.step({ type: 'ack', alarmId: 'brannock-mere:vm-girder:g:S1-MID-G2:1', user: 'eng-ashdown', reason: 'rule retired', atMs: T0 + 5000 });
    expect(ack.transitions.map((t) => t.alarm.state)).toEqual(['closed']);
    expect(restored.visibleAlarms()).toEqual([]);
  });
  it('refuses an invalid snapshot naming the field', () => {
    expect(() => createAlarmEngine(config(), lookups, '{"version":1,"startMs":null,"keys":{},"alarms":{"k":{"id":3}},"loggerLastMs":{},"channelLastMs":{}}'))
      .toThrow(/alarms\.k\.id/);
  });
});

describe('alarm engine: channel health', () => {
  it('out of range raises with the valid-range limit, clears when back', () => {
    const { transitions } = run([
      { type: 'frame', frame: frame(T0, { ch01: 10, ch02: 5 }) },
      { type: 'frame', frame: frame(T0 + 10_000, { ch01: 3500, ch02: 5 }) },
      { type: 'frame', frame: frame(T0 + 20_000, { ch01: 12, ch02: 5 }) },
    ]);
    expect(transitions.map((t) => `${t.kind}:${t.alarm.ruleId}:${t.alarm.value}:${t.alarm.limit}`)).toEqual([
      'raised:out_of_range:3500:3000', 'cleared:out_of_range:12:3000',
    ]);
    expect(transitions[0].alarm.subject).toEqual({ kind: 'channel', loggerId: 'LG-01', channelId: 'ch01', groupId: 'S1-MID-G2' });
  });
  it('a logger clock running ahead of arrival raises clock_offset, and clears once back in step', () => {
    // Transport only delays a message, so a timestamp later than its arrival means the clock runs ahead (common practice).
    const at = (s: number, aheadMs: number): AlarmInput => ({ type: 'frame', frame: { ...frame(T0 + s * 1000 + aheadMs, { ch01: 10 + s, ch02: 5 + s }), arrivalMs: T0 + s * 1000 } });
    const { transitions } = run([at(0, 100), at(10, 1_900), at(20, 2_500), at(30, 300)]);
    expect(transitions.map((t) => `${t.kind}:${t.alarm.ruleId}:${t.alarm.value}:${t.alarm.limit}`)).toEqual([
      'raised:clock_offset:2.5:2', 'cleared:clock_offset:0.3:2',
    ]);
    expect(transitions[0].alarm.subject).toEqual({ kind: 'logger', loggerId: 'LG-01' });
  });
  it('a channel null for 3 intervals raises channel_missing', () => {
    const inputs: AlarmInput[] = [0, 10, 20, 30, 40].map((s) => ({
      type: 'frame', frame: frame(T0 + s * 1000, s === 0 ? { ch01: 1, ch02: 1 } : { ch01: null, ch02: 1 }),
    }));
    const { transitions } = run(inputs);
    expect(transitions).toHaveLength(1);
    expect(transitions[0].alarm).toMatchObject({ ruleId: 'channel_missing', value: 30, limit: 30, sinceMs: T0 + 30_000 });
  });
  it('flatline over the window raises', () => {
    const inputs: AlarmInput[] = [];
    for (let s = 0; s <= 130; s += 10) inputs.push({ type: 'frame', frame: frame(T0 + s * 1000, { ch01: 100 + (s % 20 === 0 ? 0.2 : 0), ch02: s }) });
    const { transitions } = run(inputs);
    expect(transitions.map((t) => `${t.kind}:${t.alarm.ruleId}:${t.alarm.subject.kind === 'channel' ? t.alarm.subject.channelId : ''}`))
      .toEqual(['raised:flatline:ch01']);
    expect(transitions[0].alarm.sinceMs).toBe(T0 + 120_000);
    expect(transitions[0].alarm.value).toBeCloseTo(0.2, 9);
  });
});
