import { describe, expect, it } from 'vitest';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import type { AlarmTransition } from '../../../src/alarms/types.js';
import { config, frame, lookups, T0 } from '../fixtures.js';

const scan = (s: number, seq: number, arrivalS = s) =>
  ({ type: 'frame' as const, frame: { ...frame(T0 + s * 1000, { ch01: 100 + (s % 7), ch02: -s }), seq, arrivalMs: T0 + arrivalS * 1000 } });
const text = (ts: AlarmTransition[]) => ts.filter((t) => t.alarm.ruleId === 'sequence_restart').map((t) => `${t.kind} ${t.alarm.value} ${t.alarm.limit}`);

describe('logger seq', () => {
  it('counts a counter going back or repeating per logger; only those with a later logger time are restarts', () => {
    const e = createAlarmEngine(config(), lookups);
    const inputs = [
      scan(0, 10), scan(10, 11), scan(20, 12),
      scan(10, 11, 25), scan(20, 12, 26), // old scans delivered again (a broker redelivery): counted, no restart
      scan(30, 0), // logger rebooted: counter back to 0, its time goes on -> restart
      scan(40, 0), // counter stuck: same seq, later time -> restart
      scan(50, 1),
    ];
    for (const i of inputs) e.step(i);
    expect(e.sequenceCounts()).toEqual({ 'LG-01': { backwards: 2, repeated: 2, restarts: 2 } });
  });

  it('raises sequence_restart past max_per_hour restarts in an hour and clears once the hour holds fewer', () => {
    const e = createAlarmEngine(config({ health: { level: 'advisory', spike: { enabled: false }, sequence_restart: { max_per_hour: 2 } } }), lookups);
    const out: AlarmTransition[] = [];
    let seq = 0;
    const step = (s: number, next?: number) => out.push(...e.step(scan(s, next ?? ++seq)).transitions);
    step(0);
    for (const s of [600, 1200]) { seq = 0; step(s, 0); } // two restarts in the hour: within the limit
    expect(text(out)).toEqual([]);
    seq = 0;
    step(1800, 0); // a third
    expect(text(out)).toEqual(['raised 3 2']);
    step(2400); step(3000);
    expect(text(out)).toEqual(['raised 3 2']); // still 3 restarts in the last hour
    step(4100);
    expect(text(out)).toEqual(['raised 3 2']);
    step(4300); // the restart at 600 s left the hour: 2 remain
    expect(text(out)).toEqual(['raised 3 2', 'cleared 2 2']);
    expect(e.sequenceCounts()['LG-01'].restarts).toBe(3);
  });

  it('a scan without seq says nothing', () => {
    const e = createAlarmEngine(config(), lookups);
    e.step({ type: 'frame', frame: frame(T0, { ch01: 1, ch02: 2 }) });
    expect(e.sequenceCounts()).toEqual({});
  });
});
