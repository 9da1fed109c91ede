import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import type { AlarmInput, AlarmTransition } from '../../../src/alarms/types.js';
import { QUALITY_FLAGS } from '../../../src/model/quality.js';
import { FLAG_HEALTH_CHECK } from '../../../src/alarms/engine/health-flags.js';
import { config, lookups, result, T0 } from '../fixtures.js';

const quiet = { ...lookups, loggers: new Map() };
const ID = (n: number) => `brannock-mere:vm-girder:g:S1-MID-G2:${n}`;

/** A result every second: a von Mises value and, sometimes, a quality flag. */
const resultsArb = fc.array(
  fc.record({ vm: fc.double({ min: 0, max: 320, noNaN: true }), flag: fc.option(fc.constantFrom(...QUALITY_FLAGS), { freq: 4 }) }),
  { minLength: 1, maxLength: 120 },
);

describe('alarm engine properties', () => {
  it('no alarm without its cause: every structural raise or level rise comes from an unflagged result beyond the limit, every clear from one back past limit - margin', () => {
    const checked = { raised: 0, cleared: 0 }; // structural transitions whose cause was checked
    fc.assert(
      fc.property(resultsArb, (rs) => {
        const engine = createAlarmEngine(config(), quiet);
        rs.forEach((r, i) => {
          const input = result(T0 + i * 1000, r.vm, r.flag === null ? [] : [r.flag]);
          for (const t of engine.step({ type: 'result', result: input }).transitions) {
            if (t.alarm.alarmClass !== 'structural') {
              // a health alarm from a result is raised by a flag, cleared by its absence
              const cause = input.flags.filter((f) => FLAG_HEALTH_CHECK[f] === t.alarm.ruleId);
              if (t.kind === 'raised') expect(cause.length).toBeGreaterThan(0);
              if (t.kind === 'cleared') expect(cause).toEqual([]);
              continue;
            }
            expect(input.flags).toEqual([]);
            if (t.kind === 'raised' || (t.kind === 'level_changed' && t.alarm.levelIndex > cfgLevel(t.previousLevel))) {
              expect(r.vm).toBeGreaterThanOrEqual(t.alarm.limit!);
              checked.raised++;
            }
            if (t.kind === 'cleared') {
              expect(r.vm).toBeLessThanOrEqual(t.alarm.limit! - 10);
              checked.cleared++;
            }
          }
        });
      }),
      // Random runs are short and mostly flagged (13-14 raises and 5-6 clears in 300 runs, measured): one unflagged raise and clear is given as an example.
      { numRuns: 300, examples: [[[{ vm: 200, flag: null }, { vm: 100, flag: null }]]] },
    );
    expect(checked.raised).toBeGreaterThan(0);
    expect(checked.cleared).toBeGreaterThan(0);
  });

  it('every raised alarm is either still visible or both cleared and acknowledged', () => {
    const step = fc.oneof(
      fc.record({ kind: fc.constant('result' as const), vm: fc.double({ min: 100, max: 220, noNaN: true }) }),
      fc.record({ kind: fc.constant('ack' as const), n: fc.integer({ min: 1, max: 6 }), user: fc.constantFrom('eng-ashdown', 'tech-morrow', 'visitor') }),
      fc.record({ kind: fc.constant('tick' as const) }),
    );
    // Alarms seen closed (cleared, acknowledged, gone): the branch that checks them must be reached.
    let closedChecked = 0;
    fc.assert(
      fc.property(fc.array(step, { maxLength: 150 }), (steps) => {
        const engine = createAlarmEngine(config({ flapping: { max_cycles: 3, window_s: 20 } }), quiet);
        const seen: AlarmTransition[] = [];
        steps.forEach((s, i) => {
          const t = T0 + i * 1000;
          const input: AlarmInput =
            s.kind === 'result' ? { type: 'result', result: result(t, s.vm) }
            : s.kind === 'ack' ? { type: 'ack', alarmId: ID(s.n), user: s.user, reason: 'checked', atMs: t }
            : { type: 'tick', nowMs: t };
          seen.push(...engine.step(input).transitions);
        });
        const visible = new Set(engine.visibleAlarms().map((a) => a.id));
        for (const id of new Set(seen.filter((t) => t.kind === 'raised' || t.kind === 'suppressed_flapping').map((t) => t.alarm.id))) {
          const mine = seen.filter((t) => t.alarm.id === id);
          const gone = !visible.has(id);
          const clearedAndAcked = mine.some((t) => t.kind === 'cleared') && mine.some((t) => t.kind === 'acknowledged');
          expect(gone ? clearedAndAcked : true).toBe(true);
          if (gone) {
            expect(mine[mine.length - 1].alarm.state).toBe('closed');
            closedChecked++;
          }
        }
      }),
      // Random runs closed an alarm in only 3 to 5 of 300 runs (measured), so one run that closes one
      // is given as an example: raised, cleared, acknowledged by an allowed user.
      { numRuns: 300, examples: [[[{ kind: 'result', vm: 210 }, { kind: 'result', vm: 100 }, { kind: 'ack', n: 1, user: 'eng-ashdown' }]]] },
    );
    expect(closedChecked).toBeGreaterThan(0);
  });

  it('hysteresis never chatters: a signal oscillating inside (threshold - margin, next threshold) raises once and never clears', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 140.0001, max: 199.9999, noNaN: true }), { minLength: 1, maxLength: 200 }), (vs) => {
        const engine = createAlarmEngine(config(), quiet);
        const out = [150, ...vs].flatMap((v, i) => engine.step({ type: 'result', result: result(T0 + i * 1000, v) }).transitions);
        expect(out.map((t) => t.kind)).toEqual(['raised']);
      }),
      { numRuns: 300 },
    );
  });

  it('a signal below the threshold never raises, however it wanders', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: -400, max: 149.9999, noNaN: true }), { maxLength: 200 }), (vs) => {
        const engine = createAlarmEngine(config(), quiet);
        const out = vs.flatMap((v, i) => engine.step({ type: 'result', result: result(T0 + i * 1000, v) }).transitions);
        expect(out).toEqual([]);
      }),
    );
  });
});

function cfgLevel(name: string | undefined): number {
  return ['advisory', 'alert', 'action'].indexOf(name ?? '');
}
