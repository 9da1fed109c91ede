import { describe, expect, it } from 'vitest';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import type { AlarmInput, AlarmLookups } from '../../../src/alarms/types.js';
import { config, frame, lookups, result, T0 } from '../fixtures.js';

const quiet: AlarmLookups = { ...lookups, loggers: new Map() };
const kinds = (inputs: AlarmInput[], cfg = config(), l: AlarmLookups = quiet) => {
  const e = createAlarmEngine(cfg, l);
  return { e, out: inputs.flatMap((i) => e.step(i).transitions) };
};

describe('flapping', () => {
  it('after max_cycles raise/clear cycles in the window, one suppressed_flapping alarm replaces the chatter', () => {
    const inputs: AlarmInput[] = [];
    for (let i = 0; i < 40; i++) inputs.push({ type: 'result', result: result(T0 + i * 1000, i % 2 === 0 ? 160 : 100) });
    // then quiet (below) for 600 s: the flapping alarm clears once
    for (let s = 40; s <= 650; s += 10) inputs.push({ type: 'result', result: result(T0 + s * 1000, 100) });
    const { out } = kinds(inputs, config({ flapping: { max_cycles: 4, window_s: 600 } }));
    expect(out.map((t) => t.kind)).toEqual([
      'raised', 'cleared', 'raised', 'cleared', 'raised', 'cleared', 'raised', 'cleared', 'suppressed_flapping', 'cleared',
    ]);
    const last = out[out.length - 1];
    // 40 results: 4 cycles + the flapping raise at i=8 leaves i=9..39 (31 changes) swallowed
    expect(last.alarm).toMatchObject({ flapping: false, suppressedCount: 31, raiseCount: 5, state: 'cleared_unacknowledged' });
    expect(last.atMs).toBe(T0 + 640_000); // condition gone since 39 s, + 600 s window, first result at or after
    expect(new Set(out.map((t) => t.alarm.id)).size).toBe(1);
  });
});

describe('rate rule', () => {
  it('raises when the least-squares slope over the window exceeds the rate, with the slope as value', () => {
    const cfg = config({
      rules: [{
        id: 'vm-rate', kind: 'rate', quantity: 'von_mises_MPa', scope: { kind: 'groups', group_ids: ['S1-MID-G2'] },
        direction: 'rising', window_s: 20, thresholds: [{ level: 'alert', rate_per_s: 2 }], clear_margin_per_s: 0.5,
        action: 'Check for an impact or a failing bearing.',
      }],
    });
    const vs = [...Array.from({ length: 15 }, () => 50), ...Array.from({ length: 30 }, (_, i) => 50 + 3 * (i + 1)), ...Array.from({ length: 40 }, () => 140)];
    const { out } = kinds(vs.map((v, i) => ({ type: 'result', result: result(T0 + i * 1000, v) })), cfg);
    expect(out.map((t) => t.kind)).toEqual(['raised', 'cleared']);
    expect(out[0].alarm).toMatchObject({ quantity: 'rate_of_von_mises_MPa', units: 'MPa/s', limit: 2, level: 'alert' });
    expect(out[0].alarm.value).toBeGreaterThanOrEqual(2);
    expect(out[1].alarm.value).toBeLessThanOrEqual(1.5);
    // group scope: another group never raises
    const other = kinds(vs.map((v, i) => ({ type: 'result', result: result(T0 + i * 1000, v, [], 'S2-MID-G2') })), cfg);
    expect(other.out).toEqual([]);
  });
});

describe('spike (Hampel) and repeats', () => {
  it('raises on a spike once the next reading is back, merges a repeat spike, clears off_delay_s after the last spike', () => {
    const cfg = config({ health: { level: 'advisory', spike: { window_samples: 9, k_mads: 3, off_delay_s: 60 }, flatline: { enabled: false } } });
    const inputs: AlarmInput[] = [];
    for (let i = 0; i < 40; i++) {
      const base = 100 + (i % 3) - 1; // 99, 100, 101: MAD 1
      const ch01 = i === 20 || i === 23 ? 160 : base;
      inputs.push({ type: 'frame', frame: frame(T0 + i * 10_000, { ch01, ch02: base }) });
    }
    const { out, e } = kinds(inputs, cfg, lookups);
    // Spikes at scans 20 and 23 are confirmed by the scans after them (21, 24); the condition is gone
    // from scan 25 (250 s), so the 60 s off-delay clears it at 310 s.
    expect(out.map((t) => `${t.kind}:${t.alarm.ruleId}:${t.atMs - T0}`)).toEqual(['raised:spike:210000', 'cleared:spike:310000']);
    expect(out[0].alarm).toMatchObject({ units: 'micro', limit: expect.closeTo(3 * 1.4826, 9) });
    expect(out[0].alarm.value).toBeCloseTo(60, 9);
    expect(out[1].alarm.repeatCount).toBe(1);
    expect(e.visibleAlarms()).toHaveLength(1);
  });
});

describe('spike threshold per channel unit', () => {
  it('ignores a jump below min_deviation_by_unit for the channel\'s unit and flags one above it', () => {
    const spikes = (jump: number) => {
      const cfg = config({ health: { level: 'advisory', spike: { window_samples: 9, k_mads: 3, min_deviation_by_unit: { micro: 100 } }, flatline: { enabled: false } } });
      const inputs: AlarmInput[] = [];
      for (let i = 0; i < 20; i++) inputs.push({ type: 'frame', frame: frame(T0 + i * 10_000, { ch01: 100 + (i % 3) + (i === 12 ? jump : 0), ch02: 5 + (i % 3) }) });
      return kinds(inputs, cfg, lookups).out.filter((t) => t.alarm.ruleId === 'spike').length;
    };
    expect(spikes(60)).toBe(0); // far beyond 3 MADs, but below the 100 microstrain floor
    expect(spikes(160)).toBe(1);
  });
});
