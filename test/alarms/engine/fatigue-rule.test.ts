import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import { alarmText, transitionToPoint } from '../../../src/alarms/index.js';
import type { AlarmsConfigInput } from '../../../src/alarms/schema.js';
import type { AlarmInput, AlarmTransition } from '../../../src/alarms/types.js';
import { config, lookups, T0 } from '../fixtures.js';

const quiet = { ...lookups, loggers: new Map() };
const action = 'Inspect the weld toe for cracks.';
const rules = (over: Record<string, unknown> = {}): AlarmsConfigInput['rules'] => [{
  id: 'weld-rate', kind: 'fatigue_damage_rate', thresholds: [{ level: 'advisory', damage_per_day: 0.001 }, { level: 'alert', damage_per_day: 0.01 }],
  clear_margin_per_day: 0.0002, action, ...over,
}];
const SNAP_S = 300; // snapshots every write interval
const fatigue = (i: number, damagePerDay: number, damage = 0.1, rateWindowS = 86_400, detailId = 'weld-1'): AlarmInput => ({
  type: 'fatigue', atMs: T0 + i * SNAP_S * 1000,
  details: [{ detailId, groupId: 'S1-MID-G2', location: 'span 1 girder G2, flange butt weld', damage, damagePerDay, rateWindowS }],
});
const kinds = (ts: AlarmTransition[]) => ts.map((t) => `${t.kind} ${t.alarm.level}`);

describe('fatigue rules (damage per day, accumulated damage)', () => {
  it('the damage rate raises at its thresholds, changes level and clears only below threshold - margin', () => {
    const e = createAlarmEngine(config({ rules: rules() }), quiet);
    const step = (i: number, r: number) => e.step(fatigue(i, r)).transitions;
    expect(step(0, 0.0009)).toEqual([]);
    const raised = step(1, 0.001);
    expect(kinds(raised)).toEqual(['raised advisory']);
    expect(raised[0].alarm).toMatchObject({
      id: 'brannock-mere:weld-rate:d:weld-1:1', alarmClass: 'structural', subject: { kind: 'detail', detailId: 'weld-1', groupId: 'S1-MID-G2' },
      zone: 'span-1', location: 'span 1 girder G2, flange butt weld', quantity: 'fatigue_damage_per_day', units: '1/day', value: 0.001, limit: 0.001,
    });
    expect(kinds(step(2, 0.02))).toEqual(['level_changed alert']);
    expect(step(3, 0.0099)).toEqual([]); // inside the alert band's margin (0.01 - 0.0002)
    expect(kinds(step(4, 0.0097))).toEqual(['level_changed advisory']);
    expect(step(5, 0.00081)).toEqual([]); // above 0.001 - 0.0002
    expect(kinds(step(6, 0.0008))).toEqual(['cleared advisory']);
    // What the crews and the database get: the detail named.
    expect(alarmText(raised[0])).toContain('(fatigue detail weld-1 (group S1-MID-G2))');
    expect(transitionToPoint(raised[0]).tags).toMatchObject({ detail: 'weld-1', group: 'S1-MID-G2', quantity: 'fatigue_damage_per_day' });
  });

  it('a rate not known yet, or taken over less than min_window_h of monitored time, is no evidence either way', () => {
    const e = createAlarmEngine(config({ rules: rules({ min_window_h: 2 }) }), quiet);
    expect(e.step(fatigue(0, NaN)).transitions).toEqual([]);
    expect(e.step(fatigue(1, 5, 0.1, 7199)).transitions).toEqual([]); // 2 h less a second
    expect(kinds(e.step(fatigue(2, 0.005, 0.1, 7200)).transitions)).toEqual(['raised advisory']);
    expect(e.step(fatigue(3, 0, 0.1, 100)).transitions).toEqual([]); // a short window after a restart does not clear it either
    expect(e.visibleAlarms().map((a) => a.state)).toEqual(['active_unacknowledged']);
  });

  it('on and off delays run on the snapshots\' logger time', () => {
    const e = createAlarmEngine(config({ rules: rules({ on_delay_s: 600, off_delay_s: 900 }) }), quiet);
    const out = [0.002, 0.002, 0.002, 0.0001, 0.0001, 0.0001, 0.0001].map((r, i) => kinds(e.step(fatigue(i, r)).transitions));
    // Above from snapshot 0: confirmed when 600 s have passed (snapshot 2); below from snapshot 3: cleared 900 s later (snapshot 6).
    expect(out).toEqual([[], [], ['raised advisory'], [], [], [], ['cleared advisory']]);
  });

  it('accumulated damage above a fraction; its trend is the damage rate per second', () => {
    const e = createAlarmEngine(config({
      rules: [{ id: 'weld-used', kind: 'fatigue_damage', scope: { kind: 'details', detail_ids: ['weld-1'] }, thresholds: [{ level: 'advisory', fraction: 0.5 }, { level: 'action', fraction: 1 }], action }],
    }), quiet);
    expect(e.step(fatigue(0, 0.01, 0.49)).transitions).toEqual([]);
    expect(e.step(fatigue(1, 0.01, 0.9, 86_400, 'weld-2')).transitions).toEqual([]); // not in the rule's scope
    const t = e.step(fatigue(2, 0.0864, 0.5)).transitions;
    expect(kinds(t)).toEqual(['raised advisory']);
    expect(t[0].alarm).toMatchObject({ quantity: 'fatigue_damage', units: '1', value: 0.5, limit: 0.5, trendPerS: expect.closeTo(1e-6, 15) });
    expect(kinds(e.step(fatigue(3, 0.01, 1.02)).transitions)).toEqual(['level_changed action']);
  });

  it('no alarm without its cause: every raise or rise has the rate at or above its limit, every clear at or below limit - margin (property)', () => {
    fc.assert(fc.property(fc.array(fc.oneof(fc.double({ min: 0, max: 0.03, noNaN: true }), fc.constant(NaN)), { minLength: 1, maxLength: 100 }), (rates) => {
      const e = createAlarmEngine(config({ rules: rules() }), quiet);
      rates.forEach((r, i) => {
        for (const t of e.step(fatigue(i, r)).transitions) {
          expect(Number.isFinite(r)).toBe(true);
          const rising = t.kind === 'raised' || (t.kind === 'level_changed' && t.alarm.level === 'alert');
          if (rising) expect(r).toBeGreaterThanOrEqual(t.alarm.limit!);
          if (t.kind === 'cleared') expect(r).toBeLessThanOrEqual(t.alarm.limit! - 0.0002);
        }
      });
    }), { numRuns: 300 });
  });

  it('hysteresis never chatters: a rate wandering inside (threshold - margin, next threshold) raises once and never clears (property)', () => {
    fc.assert(fc.property(fc.array(fc.double({ min: 0.00080001, max: 0.00999999, noNaN: true }), { maxLength: 200 }), (rs) => {
      const e = createAlarmEngine(config({ rules: rules() }), quiet);
      const out = [0.001, ...rs].flatMap((r, i) => e.step(fatigue(i, r)).transitions);
      expect(kinds(out)).toEqual(['raised advisory']);
    }), { numRuns: 300 });
  });
});
