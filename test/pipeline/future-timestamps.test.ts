import { Subject } from 'rxjs';
import { describe, expect, it } from 'vitest';
import type { DeadLetterSink } from '../../src/adapters/deadletter/sink.js';
import { createAlarmEngine } from '../../src/alarms/engine/engine.js';
import type { AlarmTransition } from '../../src/alarms/types.js';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { replay } from '../../src/app/replay.js';
import type { RawMessage } from '../../src/model/raw-message.js';
import { toAlarmInputs } from '../../src/app/alarms-wiring.js';
import { alarmLookups } from '../../src/app/lookups.js';
import { compileTopicPattern } from '../../src/ingest/topic.js';
import type { DeadLetter } from '../../src/model/rejection.js';
import { pipeline, type PipelineInput, type PipelineMessage } from '../../src/pipeline/pipeline.js';
import type { FrameOutput } from '../../src/pipeline/process-frames.js';
import { config, configInput } from '../alarms/fixtures.js';
import { baseDoc, compileOrThrow, microGauge } from '../support/structures.js';

/** One steel gauge on `lg` (a scan a second), joined by interpolation to a thermocouple on `th` (a scan a second). */
const structure = compileOrThrow(baseDoc(
  [{
    id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }],
    temperature_sensors: ['tc'], temperature: { mode: 'interpolate', max_age_s: 30, max_wait_s: 6 },
  }],
  [microGauge('g', 'c1')],
  {
    loggers: [{ id: 'lg', expected_interval_s: 1 }, { id: 'th', expected_interval_s: 1 }],
    temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'th', channel: 't' } }],
  },
));
const T0 = Date.UTC(2031, 4, 12, 8, 0, 0);
const HOUR_MS = 3_600_000;

/**
 * 300 s of scans of both loggers, one second apart, stamped with their arrival time, except the
 * scan of `aheadLogger` at 100 s, dated an hour ahead (the fault of issue 14, item 7). Runs them
 * through the pipeline and the alarm engine; returns what came out.
 */
function run(aheadLogger: 'th' | 'lg', maxFutureMs?: number) {
  const input$ = new Subject<PipelineInput<PipelineMessage>>();
  const deadLetters: DeadLetter[] = [];
  const sink: DeadLetterSink = { write: async (d) => { deadLetters.push(d); } };
  const engine = createAlarmEngine(config(), alarmLookups(structure));
  const transitions: AlarmTransition[] = [];
  const results: Array<{ timeMs: number; arrivalMs: number; heldMs: number; stale: boolean; ageS: number }> = [];
  let clockMs = 0;
  input$.pipe(pipeline({ structure, topicPattern: compileTopicPattern(), deadLetters: sink, maxFutureMs })).subscribe((o: FrameOutput<PipelineMessage>) => {
    for (const i of toAlarmInputs(o)) transitions.push(...engine.step(i).transitions);
    if (o.kind !== 'frame') return;
    for (const r of o.results) {
      results.push({ timeMs: r.timeMs, arrivalMs: o.frame.arrivalMs, heldMs: clockMs - o.frame.arrivalMs, stale: r.flags.includes('temperature_stale'), ageS: r.values.temperature_age_s ?? Number.NaN });
    }
  });
  const send = (logger: string, arrivalMs: number, ts: number, values: Record<string, number>) => {
    const payload = new TextEncoder().encode(JSON.stringify({ ts, seq: Math.floor((arrivalMs - T0) / 1000), values }));
    input$.next({ kind: 'message', message: { raw: { topic: `strainward/test-structure/${logger}/scan`, payload, arrivalMs }, ack: () => {} } });
  };
  for (let s = 0; s < 300; s++) {
    const t = T0 + s * 1000;
    clockMs = t;
    input$.next({ kind: 'tick', nowMs: t });
    send('th', t, s === 100 && aheadLogger === 'th' ? t + HOUR_MS : t, { t: 15 + s / 100 });
    clockMs = t + 500;
    send('lg', t + 500, s === 100 && aheadLogger === 'lg' ? t + 500 + HOUR_MS : t + 500, { c1: 100 });
  }
  input$.complete();
  // From the last strain scan before the fault (it interpolates towards the scan at 100 s) to the
  // last but one (the last is computed at the end of input, with nothing after it).
  const after = results.filter((r) => r.arrivalMs >= T0 + 99_500 && r.arrivalMs < T0 + 299_000);
  const before = results.filter((r) => r.arrivalMs < T0 + 99_500);
  return { deadLetters, transitions, results, after, before };
}

describe('a scan dated ahead of the processor clock', () => {
  it('accepted (the former behaviour, no tolerance), a thermocouple scan an hour ahead flags every later result temperature_stale', () => {
    const r = run('th', Number.POSITIVE_INFINITY);
    // Issue 14 item 7 saw 173 of 173 results flagged after it (7 of 137 before); here 200 of 200, 0 of 99 before.
    expect(r.before).toHaveLength(99);
    expect(r.before.filter((x) => x.stale)).toHaveLength(0);
    expect(r.after).toHaveLength(200);
    expect(r.after.filter((x) => x.stale)).toHaveLength(200);
    // The future reading is the upper neighbour of each later interpolation: its age is about an hour.
    expect(Math.min(...r.after.map((x) => x.ageS))).toBeGreaterThan(3300);
  });

  it('refused (default 5 s), it is dead-lettered with the reason, raises the logger clock alarm and poisons nothing', () => {
    const r = run('th');
    expect(r.deadLetters).toHaveLength(1);
    expect(r.deadLetters[0].rejections).toEqual([{
      code: 'future_timestamp', path: 'ts',
      reason: "ts: 2031-05-12T09:01:40.000Z is 3600.0 s ahead of the processor's clock (arrival 2031-05-12T08:01:40.000Z), "
        + "more than ingest.max_future_s = 5 s: check the logger's clock",
    }]);
    expect(r.after).toHaveLength(200);
    expect(r.after.filter((x) => x.stale)).toHaveLength(0);
    // Interpolated between scans one second apart, two across the refused one: at most 1.5 s old (exact on ms).
    expect(Math.max(...r.after.map((x) => x.ageS))).toBe(1.5);
    const clock = r.transitions.filter((t) => t.alarm.ruleId === 'clock_offset');
    expect(clock.map((t) => `${t.kind} ${t.alarm.subject.kind === 'logger' ? t.alarm.subject.loggerId : ''} ${t.alarm.value} ${t.alarm.limit}`))
      .toEqual(['raised th 3600 2', 'cleared th 0 2']); // cleared by the next scan, visible until acknowledged
  });

  it('a strain scan dated an hour ahead held every later scan of its logger 6 s; refused, none waits longer than its temperature', () => {
    const before = run('lg', Number.POSITIVE_INFINITY);
    // The former behaviour: the future scan (arrived at 100.5 s) waited max_wait_s = 6 s for a temperature after
    // its time, and its logger's next five scans behind it: all released together at 106.5 s.
    const held = before.results.filter((x) => x.arrivalMs >= T0 + 100_500 && x.arrivalMs <= T0 + 106_500).map((x) => x.heldMs);
    expect(held).toEqual([6000, 5000, 4000, 3000, 2000, 1000, 500]);
    const fixed = run('lg');
    expect(fixed.deadLetters.map((d) => d.rejections[0].code)).toEqual(['future_timestamp']);
    // Each scan waits only for the next thermocouple scan, 0.5 s after it.
    expect(Math.max(...fixed.after.map((x) => x.heldMs))).toBe(500);
    expect(fixed.transitions.filter((t) => t.alarm.ruleId === 'clock_offset').map((t) => `${t.kind} ${t.alarm.value}`)).toEqual(['raised 3600', 'cleared 0']);
  });

  it('within the tolerance a scan is accepted, and the tolerance is configurable', () => {
    expect(run('th', 3_600_001).deadLetters).toHaveLength(0);
    expect(run('th', 0).deadLetters).toHaveLength(1);
  });
});

describe('replay of a capture with a scan dated ahead', () => {
  it('decides as live did: the arrival time recorded in the capture is the clock', async () => {
    const withAlarms = compileOrThrow({ ...baseDoc(structure.config.groups, structure.config.gauges, {
      loggers: structure.config.loggers, temperature_sensors: structure.config.temperature_sensors,
    }), alarms: configInput({ rules: [] }) });
    async function* capture(): AsyncGenerator<RawMessage> {
      for (let s = 0; s < 60; s++) {
        const t = T0 + s * 1000;
        const ts = s === 30 ? t + HOUR_MS : t;
        yield { topic: 'strainward/test-structure/th/scan', payload: new TextEncoder().encode(JSON.stringify({ ts, values: { t: 15 } })), arrivalMs: t };
        yield { topic: 'strainward/test-structure/lg/scan', payload: new TextEncoder().encode(JSON.stringify({ ts: t + 500, values: { c1: 100 } })), arrivalMs: t + 500 };
      }
    }
    const deadLetters: DeadLetter[] = [];
    const summary = await replay({
      structure: withAlarms, messages: capture(), sink: new MemorySink(), runTag: 'r', tickMs: 1000, speed: 0,
      deadLetters: { write: async (d) => { deadLetters.push(d); } }, sleep: async () => {}, alarms: true, collectResults: true,
    });
    expect(summary.rejected).toBe(1);
    expect(deadLetters[0].rejections[0]).toMatchObject({ code: 'future_timestamp', path: 'ts' });
    expect(summary.collected.filter((r) => r.flags.includes('temperature_stale'))).toHaveLength(0);
    expect(summary.transitions.filter((t) => t.alarm.ruleId === 'clock_offset').map((t) => `${t.kind} ${t.alarm.value}`)).toEqual(['raised 3600', 'cleared 0']);
  });
});
