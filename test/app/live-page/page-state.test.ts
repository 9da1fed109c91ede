import { describe, expect, it } from 'vitest';
import { initialPageState, loggerStateAt, MAX_REFUSALS, orderedAlarms, pageView, reducePage, type ProcessorSample } from '../../../src/app/live-page/page-state.js';
import { TrendRing } from '../../../src/app/live-page/trend-ring.js';
import type { AckRefusal, Alarm, AlarmLookups, AlarmTransition } from '../../../src/alarms/types.js';
import type { GroupResult } from '../../../src/model/result.js';

const T0 = Date.UTC(2026, 0, 5, 8);

const lookups: AlarmLookups = {
  structureId: 's',
  groups: new Map([['g1', { zone: 'a', location: 'beam 1' }], ['g2', { zone: 'b', location: 'beam 2' }]]),
  loggers: new Map([['lg', {
    zone: 'a', location: 'cabinet', expectedIntervalS: 1,
    channels: new Map([
      ['ch1', { groupId: 'g1', location: 'gauge 1', validMin: -100, validMax: 100, unit: 'microstrain' }],
      ['ch2', { groupId: 'g2', location: 'gauge 2', validMin: -100, validMax: 100, unit: 'microstrain' }],
    ]),
  }]]),
};

const fresh = (trend_s = 60) => initialPageState({
  structureId: 's', name: 'Test structure',
  groups: [{ id: 'g1', zone: 'a', location: 'beam 1', kind: 'plane_rosette', material: 'steel', vonMisesLimits: [] }, { id: 'g2', zone: 'b', location: 'beam 2', kind: 'single', material: 'steel', vonMisesLimits: [{ level: 'advisory', value: 55 }] }],
}, lookups, trend_s);

const result = (groupId: string, timeMs: number, values: GroupResult['values'], flags: GroupResult['flags'] = []): GroupResult => ({
  structureId: 's', groupId, zone: 'a', loggerId: 'lg', timeMs, seq: null, values, elementStrainMicro: {}, flags,
});

function alarm(over: Partial<Alarm>): Alarm {
  return {
    id: 'a', key: 'k', structureId: 's', zone: 'a', alarmClass: 'structural', ruleId: 'r', subject: { kind: 'group', groupId: 'g1' }, location: 'beam 1',
    quantity: 'von_mises_MPa', value: 60, limit: 55, units: 'MPa', level: 'advisory', levelIndex: 0, state: 'active_unacknowledged',
    sinceMs: T0, lastChangeMs: T0, trendPerS: null, action: 'look', raiseCount: 1, repeatCount: 0, tier: 0, tierSinceMs: T0, flapping: false,
    suppressedCount: 0, acknowledgement: null, ...over,
  } as Alarm;
}
const transition = (a: Alarm, kind: AlarmTransition['kind'] = 'raised'): AlarmTransition => ({ kind, atMs: a.lastChangeMs, alarm: a });

const sample = (messages: number, results: number, rejected = 0): ProcessorSample => ({
  messages, frames: messages, results, rejected, writeErrors: 0, heldAcks: 3, databaseConfigured: false, databaseReachable: null, spoolFillRatio: null,
});

describe('live page reducer', () => {
  it('keeps each group\'s latest result and flags, and a trend of per-second extremes', () => {
    const s = fresh();
    reducePage(s, { type: 'result', result: result('g1', T0 + 100, { von_mises_MPa: 10, principal_1_MPa: 8, principal_2_MPa: -3 }) });
    reducePage(s, { type: 'result', result: result('g1', T0 + 600, { von_mises_MPa: 14, principal_1_MPa: 12, principal_2_MPa: -1 }) });
    reducePage(s, { type: 'result', result: result('g1', T0 + 1200, { von_mises_MPa: 9, principal_1_MPa: 7, principal_2_MPa: -4, strain_xx_micro: 30 }, ['temperature_stale']) });
    reducePage(s, { type: 'result', result: result('g2', T0 + 50, { von_mises_MPa: 20, stress_axial_MPa: -20 }) });
    reducePage(s, { type: 'result', result: result('nope', T0, { von_mises_MPa: 1 }) }); // not configured: ignored
    const v = pageView(s, () => Number.NEGATIVE_INFINITY);
    const g1 = v.groups.find((g) => g.id === 'g1')!;
    // Only what the page shows is sent (strains stay in the database).
    expect(g1.values).toEqual({ von_mises_MPa: 9, principal_1_MPa: 7, principal_2_MPa: -4 });
    expect(g1.flags).toEqual(['temperature_stale']);
    expect(g1.timeMs).toBe(T0 + 1200);
    // Bucket [T0, T0+1000): max von Mises 14, highest principal 12, lowest -3; the next bucket holds the last result.
    expect(g1.trend).toEqual([[T0, 14, 12, -3], [T0 + 1000, 9, 7, -4]]);
    // A single gauge's trend uses its axial stress for both principal extremes.
    expect(v.groups.find((g) => g.id === 'g2')!.trend).toEqual([[T0, 20, -20, -20]]);
    // An update carries only the last sent bucket and newer.
    expect(pageView(s, () => T0 + 1000).groups[0].trend).toEqual([[T0 + 1000, 9, 7, -4]]);
  });

  it('bounds each trend to its length: the oldest buckets are overwritten', () => {
    const s = fresh(10);
    for (let k = 0; k < 25; k++) reducePage(s, { type: 'result', result: result('g1', T0 + k * 1000, { von_mises_MPa: k }) });
    const trend = pageView(s, () => Number.NEGATIVE_INFINITY).groups[0].trend;
    expect(trend.length).toBe(10);
    expect(trend[0]).toEqual([T0 + 15_000, 15, null, null]);
    expect(trend[9]).toEqual([T0 + 24_000, 24, null, null]);
  });

  it('tracks loggers and channels: last value, nulls, out of range, sequence gaps, silence on the pipeline clock', () => {
    const s = fresh();
    const frame = (seq: number, at: number, values: Array<[string, number | null]>) => reducePage(s, {
      type: 'frame', frame: { structureId: 's', loggerId: 'lg', timeMs: at - 40, seq, values: new Map(values), arrivalMs: at },
    });
    frame(1, T0, [['ch1', 12.5], ['ch2', null]]);
    frame(4, T0 + 1000, [['ch1', 250], ['ch2', 3]]);
    let l = pageView(s, () => 0).loggers[0];
    expect(l).toMatchObject({ id: 'lg', frames: 2, seqGaps: 2, state: 'receiving', ageS: 0 });
    expect(l.channels).toEqual([
      { id: 'ch1', unit: 'microstrain', groupId: 'g1', lastValue: 250, nulls: 0, outOfRange: true, ageS: 0 },
      { id: 'ch2', unit: 'microstrain', groupId: 'g2', lastValue: 3, nulls: 1, outOfRange: false, ageS: 0 },
    ]);
    reducePage(s, { type: 'tick', nowMs: T0 + 7000 });
    l = pageView(s, () => 0).loggers[0];
    // 6 s without a scan from a logger expected every 1 s: more than five intervals.
    expect(l.state).toBe('silent');
    expect(l.ageS).toBeCloseTo(6, 9);
    expect(loggerStateAt({ lastArrivalMs: null, expectedIntervalS: 1 }, T0)).toEqual({ state: 'waiting', ageS: null });
  });

  it('keeps visible alarms from transitions, drops closed ones, and lists the most severe first, then the newest', () => {
    const s = fresh();
    const old = alarm({ id: 'old', sinceMs: T0, lastChangeMs: T0 });
    const newer = alarm({ id: 'newer', sinceMs: T0 + 5000, lastChangeMs: T0 + 5000 });
    const severe = alarm({ id: 'severe', level: 'alert', levelIndex: 1, sinceMs: T0 - 60_000 });
    const health = alarm({ id: 'health', alarmClass: 'health', sinceMs: T0 + 9000 });
    reducePage(s, { type: 'alarms_restored', alarms: [old, alarm({ id: 'gone', state: 'closed' })] });
    reducePage(s, { type: 'alarm_transitions', transitions: [transition(newer), transition(severe), transition(health)] });
    expect(pageView(s, () => 0).alarms.map((a) => a.id)).toEqual(['severe', 'newer', 'old', 'health']);
    reducePage(s, { type: 'alarm_transitions', transitions: [transition({ ...old, state: 'closed', acknowledgement: { user: 'u', reason: 'r', atMs: T0 } }, 'acknowledged')] });
    reducePage(s, { type: 'alarm_transitions', transitions: [transition({ ...newer, state: 'active_acknowledged' }, 'acknowledged')] });
    const v = pageView(s, () => 0);
    expect(v.alarms.map((a) => [a.id, a.state])).toEqual([['severe', 'active_unacknowledged'], ['newer', 'active_acknowledged'], ['health', 'active_unacknowledged']]);
    expect(orderedAlarms([])).toEqual([]);
  });

  it('keeps the last refusals only, newest first', () => {
    const s = fresh();
    for (let k = 0; k < MAX_REFUSALS + 5; k++) {
      const r: AckRefusal = { code: 'user_not_allowed', alarmId: 'a', user: `u${k}`, userReason: 'x', reason: 'no', atMs: T0 + k };
      reducePage(s, { type: 'refusal', refusal: r });
    }
    const v = pageView(s, () => 0);
    expect(v.refusals.length).toBe(MAX_REFUSALS);
    expect(v.refusals[0].user).toBe(`u${MAX_REFUSALS + 4}`);
  });

  it('turns processor counters into rates averaged over the last 10 s', () => {
    const s = fresh();
    reducePage(s, { type: 'processor', atMs: T0, sample: sample(100, 180) });
    expect(pageView(s, () => 0).processor?.rates).toBeNull();
    reducePage(s, { type: 'processor', atMs: T0 + 2000, sample: sample(300, 580, 4) });
    const p = pageView(s, () => 0).processor!;
    expect(p.rates).toEqual({ messagesPerS: 100, resultsPerS: 200, rejectedPerS: 2 });
    expect(p.heldAcks).toBe(3);
    // Later samples: the rate covers the last 10 s only (T0 + 2 s .. T0 + 12 s).
    for (let k = 3; k <= 12; k++) reducePage(s, { type: 'processor', atMs: T0 + k * 1000, sample: sample(300 + (k - 2) * 50, 580 + (k - 2) * 20, 4) });
    expect(pageView(s, () => 0).processor!.rates).toEqual({ messagesPerS: 50, resultsPerS: 20, rejectedPerS: 0 });
    expect(s.samples.length).toBe(11);
  });
});

describe('TrendRing', () => {
  it('skips missing values and puts a late value into the newest bucket', () => {
    const r = new TrendRing(4, 1000);
    r.add(T0 + 2500, Number.NaN, 5, Number.NaN);
    r.add(T0 + 2600, 3, Number.NaN, -2);
    r.add(T0 + 1000, 7, 1, -9); // older than the newest bucket
    expect(r.since(Number.NEGATIVE_INFINITY)).toEqual([[T0 + 2000, 7, 5, -9]]);
  });
});

describe('vonMisesLimits', () => {
  it('lists the thresholds of the limit rules on von Mises that cover a group, lowest first', async () => {
    const { compileOrThrow, baseDoc, microGauge } = await import('../../support/structures.js');
    const { vonMisesLimits } = await import('../../../src/app/live-page/live-page.js');
    const rule = (id: string, scope: unknown, quantity: string, direction: string, values: number[]) => ({
      id, kind: 'limit', quantity, scope, direction, thresholds: values.map((value, i) => ({ level: ['low', 'high'][i], value })), action: 'look',
    });
    const s = compileOrThrow(baseDoc(
      [{ id: 'r1', kind: 'single', material: 'steel', zone: 'deck', location: 'test beam', elements: [{ gauge: 'g1' }] }],
      [microGauge('g1', 'ch1')],
      { alarms: {
        levels: ['low', 'high'],
        rules: [
          rule('all', { kind: 'structure' }, 'von_mises_MPa', 'above', [80, 120]),
          rule('deck', { kind: 'zone', zone: 'deck' }, 'von_mises_MPa', 'above', [60]),
          rule('named', { kind: 'groups', group_ids: ['r1'] }, 'von_mises_MPa', 'above', [70]),
          rule('below', { kind: 'structure' }, 'von_mises_MPa', 'below', [-5]),
          rule('axial', { kind: 'structure' }, 'stress_axial_MPa', 'above', [30]),
        ],
        health: { level: 'low' },
        acknowledgement: { allowed_users: { structural: ['u'] } },
      } },
    ));
    expect(vonMisesLimits(s, 'r1', 'deck')).toEqual([{ level: 'low', value: 60 }, { level: 'low', value: 70 }, { level: 'low', value: 80 }, { level: 'high', value: 120 }]);
  });

  it('keeps the latest fatigue figures, one entry per detail, in the view', async () => {
    const { pageFatigue } = await import('../../../src/app/live-page/fatigue-view.js');
    const { snCurve } = await import('../../../src/fatigue/sn-curve.js');
    const { detailFigures, detailTrusted, newDetailState } = await import('../../../src/fatigue/detail.js');
    const params = { curve: snCurve('direct', 71, 1, 1.35), scf: 1, gateMPa: 1, binWidthMPa: 10, bins: 20, gapMs: 5000, checkpointMs: 60_000, checkpoints: 24 };
    const cfg = { writeIntervalMs: 300_000, details: [{ id: 'd1', groupId: 'g1', location: 'weld toe', describe: 'test', reader: { kind: 'axial' as const, factor: 1 }, params }] };
    const st = newDetailState(params);
    for (let i = 0; i < 11; i++) detailTrusted(st, params, T0 + i * 1000, i % 2 === 0 ? 0 : 100);
    const s = fresh();
    expect(pageView(s, () => 0).fatigue).toBeNull();
    reducePage(s, { type: 'fatigue', fatigue: pageFatigue(cfg, { kind: 'fatigue', nowMs: T0 + 10_000, final: false, details: [{ id: 'd1', groupId: 'g1', figures: detailFigures(st, params) }] }) });
    const f = pageView(s, () => 0).fatigue!;
    expect(f.details).toHaveLength(1);
    // Source: EN 1993-1-9:2005 7.1, equation 7.1 with gamma_Mf 1.35: N = 2e6 (71 / (1.35 x 100))^3 cycles at 100 MPa; 5 cycles.
    expect(f.details[0].damage).toBeCloseTo(5 / (2e6 * (71 / 135) ** 3), 15);
    expect(f.details[0].counts[10]).toBe(5);
    // The curve: 2e6 cycles at 71 / 1.35 = 52.6 MPa, flat past 1e8 at the cut-off 28.7 / 1.35 = 21.3 MPa (EN 1993-1-9:2005 7.1).
    expect(f.details[0].curve.find(([n]) => Math.abs(n - 1e8) < 1)![1]).toBeCloseTo(21.25, 1);
    expect(f.details[0].curve.at(-1)).toEqual([1e9, f.details[0].curve.find(([n]) => Math.abs(n - 1e8) < 1)![1]]);
    expect(f.assumptions.some((a) => a.includes('engineering judgement'))).toBe(true);
  });
});
