import { describe, expect, it } from 'vitest';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import { selectDeliveries } from '../../../src/alarms/routing/select.js';
import { alarmMessage, alarmText } from '../../../src/alarms/routing/format.js';
import { transitionToPoint } from '../../../src/alarms/routing/points.js';
import type { AlarmTransition } from '../../../src/alarms/types.js';
import { config, frame, lookups, result, T0 } from '../fixtures.js';

const cfg = config({ escalation: { after_s: 60 } });
function raisedAndEscalated(): AlarmTransition[] {
  const e = createAlarmEngine(cfg, { ...lookups, loggers: new Map() });
  const out = [...e.step({ type: 'result', result: result(T0, 180) }).transitions];
  for (let s = 1; s <= 10; s++) out.push(...e.step({ type: 'result', result: result(T0 + s * 1000, 180 + s) }).transitions);
  out.push(...e.step({ type: 'tick', nowMs: T0 + 60_000 }).transitions);
  out.push(...e.step({ type: 'result', result: result(T0 + 61_000, 120) }).transitions);
  return out;
}

describe('route selection', () => {
  it('raise goes to tier 0, escalation to the new tier only, clear to every tier reached', () => {
    const [raised, escalated, cleared] = raisedAndEscalated();
    expect([raised.kind, escalated.kind, cleared.kind]).toEqual(['raised', 'escalated', 'cleared']);
    expect(selectDeliveries(cfg, raised).map((d) => `${d.recipientId}:${d.topic}`)).toEqual([
      'deck-crew:strainward/brannock-mere/notify/deck-crew',
    ]);
    expect(selectDeliveries(cfg, escalated).map((d) => `${d.recipientId}:${d.channel.kind}`)).toEqual(['on-call:log']);
    expect(selectDeliveries(cfg, cleared).map((d) => d.recipientId)).toEqual(['deck-crew', 'on-call']);
  });
  it('health alarms go to the instrumentation crew; level and zone criteria filter', () => {
    const e = createAlarmEngine(cfg, lookups);
    const t = e.step({ type: 'frame', frame: frame(T0, { ch01: 9999, ch02: 0 }) }).transitions[0];
    expect(selectDeliveries(cfg, t).map((d) => d.recipientId)).toEqual(['instr-crew']);
    const zoned = config({ routes: [{ match: { zone: ['span-2'], level: ['action'] }, tiers: [['control']] }] });
    expect(selectDeliveries(zoned, t)).toEqual([]);
  });
});

describe('message formatting', () => {
  it('one line with structure, where, quantity, value, limit, units, since, trend and action', () => {
    const [raised] = raisedAndEscalated();
    expect(alarmText(raised)).toBe(
      '[ADVISORY] raised: brannock-mere span-1, span 1 midspan, girder G2 bottom flange (group S1-MID-G2): ' +
        'von_mises_MPa 180 MPa (limit 150 MPa), since 2031-05-12T08:00:00.000Z. ' +
        'Action: Inspect the girder bottom flange at midspan; restrict heavy traffic if action level. [brannock-mere:vm-girder:g:S1-MID-G2:1]',
    );
    const cleared = raisedAndEscalated()[2];
    expect(alarmText(cleared)).toContain('von_mises_MPa 120 MPa (limit 150 MPa), trend -1.105 MPa/s, since');
    const body = alarmMessage(cleared);
    expect(body).toMatchObject({
      schema: 'strainward.alarm/1', transition: 'cleared', alarm_id: 'brannock-mere:vm-girder:g:S1-MID-G2:1',
      structure: 'brannock-mere', zone: 'span-1', subject: { kind: 'group', group_id: 'S1-MID-G2' }, alarm_class: 'structural',
      quantity: 'von_mises_MPa', value: 120, limit: 150, units: 'MPa', level: 'advisory', state: 'cleared_unacknowledged',
      since: '2031-05-12T08:00:00.000Z', tier: 1,
    });
    // trend: least-squares slope over the samples kept (thinned to one per 300/120 = 2.5 s), recomputed here
    const ts = [0, 3, 6, 9, 61];
    expect(body.trend_per_s).toBeCloseTo(ols(ts, [180, 183, 186, 189, 120]), 9);
  });
});

function ols(x: number[], y: number[]): number {
  const mx = x.reduce((a, b) => a + b) / x.length;
  const my = y.reduce((a, b) => a + b) / y.length;
  let num = 0;
  let den = 0;
  x.forEach((xi, i) => {
    num += (xi - mx) * (y[i] - my);
    den += (xi - mx) ** 2;
  });
  return num / den;
}

describe('database points', () => {
  it('measurement sw_alarm, identifiers as tags, numeric fields only', () => {
    const [raised] = raisedAndEscalated();
    const p = transitionToPoint(raised);
    expect(p).toEqual({
      measurement: 'sw_alarm',
      tags: {
        structure: 'brannock-mere', zone: 'span-1', alarm_id: 'brannock-mere:vm-girder:g:S1-MID-G2:1', rule: 'vm-girder',
        alarm_class: 'structural', level: 'advisory', transition: 'raised', state: 'active_unacknowledged',
        quantity: 'von_mises_MPa', group: 'S1-MID-G2',
      },
      fields: { level_index: 0, state_code: 1, transition_code: 1, raise_count: 1, tier: 0, value: 180, limit: 150 },
      timeMs: T0,
    });
    for (const v of Object.values(p.fields)) expect(Number.isFinite(v)).toBe(true);
  });
});
