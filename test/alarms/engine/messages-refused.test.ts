import { describe, expect, it } from 'vitest';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import type { AlarmTransition } from '../../../src/alarms/types.js';
import { config, lookups, T0 } from '../fixtures.js';

const refused = (s: number, loggerId = 'LG-01') =>
  ({ type: 'refused' as const, loggerId, timeMs: null, arrivalMs: T0 + s * 1000, codes: ['not_json' as const] });
const tick = (s: number) => ({ type: 'tick' as const, nowMs: T0 + s * 1000 });
const text = (ts: AlarmTransition[]) => ts.filter((t) => t.alarm.ruleId === 'messages_refused').map((t) => `${t.kind} ${(t.alarm.subject as { loggerId?: string }).loggerId} ${t.alarm.value} ${t.alarm.limit}`);

describe('messages_refused', () => {
  const cfg = config({ health: { level: 'advisory', spike: { enabled: false }, no_data: { enabled: false }, channel_missing: { enabled: false },
    messages_refused: { max_per_window: 3, window_s: 60 } } });

  it('raises once a logger has more refusals than the limit in the window, and clears at a tick once the window holds the limit', () => {
    const e = createAlarmEngine(cfg, lookups);
    const out: AlarmTransition[] = [];
    for (const s of [0, 10, 20]) out.push(...e.step(refused(s)).transitions);
    expect(text(out)).toEqual([]); // three in the window: at the limit, not above
    out.push(...e.step(refused(30)).transitions);
    expect(text(out)).toEqual(['raised LG-01 4 3']);
    out.push(...e.step(tick(55)).transitions);
    expect(text(out)).toEqual(['raised LG-01 4 3']); // all four still in the last 60 s
    out.push(...e.step(tick(61)).transitions); // the refusal at 0 s left the window: 3 remain
    expect(text(out)).toEqual(['raised LG-01 4 3', 'cleared LG-01 3 3']);
    expect(e.visibleAlarms().find((a) => a.ruleId === 'messages_refused')?.action).toMatch(/dead letters/);
  });

  it('keeps at most limit + 1 times per logger, survives a snapshot, and ignores a logger not configured', () => {
    const e = createAlarmEngine(cfg, lookups);
    for (let s = 0; s < 50; s++) e.step(refused(s * 0.5));
    e.step(refused(1, 'NOT-A-LOGGER'));
    const snap = JSON.parse(e.snapshot()) as { refusals: Record<string, number[]> };
    expect(Object.keys(snap.refusals)).toEqual(['LG-01']);
    expect(snap.refusals['LG-01']).toHaveLength(4);
    const restored = createAlarmEngine(cfg, lookups, e.snapshot());
    expect(text(restored.step(tick(24.5 + 61)).transitions)).toEqual(['cleared LG-01 0 3']);
  });
});
