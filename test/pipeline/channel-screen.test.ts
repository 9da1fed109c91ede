import { describe, expect, it } from 'vitest';
import { compileOrThrow, baseDoc, microGauge } from '../support/structures.js';
import { FrameProcessor } from '../../src/pipeline/frame-processor.js';
import { SCREEN_WAIT_INTERVALS } from '../../src/pipeline/channel-screen.js';
import type { LoggerFrame } from '../../src/model/raw-message.js';

/**
 * The instrument-health screen inside the frame processor: one steel gauge on logger `lg` (1 s
 * scans), no temperature wait, a spike test of 5 readings, 3 MADs, at least 10 microstrain, and a
 * flat-line window of 4 s.
 */
function structure(health: Record<string, unknown> = {}) {
  return compileOrThrow(baseDoc(
    [{ id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }], temperature_sensors: ['tc'], temperature: { mode: 'last' } }],
    [microGauge('g', 'c1', { valid_range: [-5000, 5000] })],
    {
      loggers: [{ id: 'lg', expected_interval_s: 1 }],
      temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'lg', channel: 't' } }],
      alarms: {
        levels: ['advisory'], rules: [], acknowledgement: { allowed_users: { structural: ['eng-a'], health: ['tech-b'] } },
        health: { level: 'advisory', spike: { window_samples: 5, k_mads: 3, min_deviation: 10 }, flatline: { window_s: 4, tolerance: 0 }, ...health },
      },
    },
  ));
}

const frame = (timeMs: number, c1: number | null): LoggerFrame =>
  ({ structureId: 'test-structure', loggerId: 'lg', timeMs, seq: null, values: new Map([['c1', c1], ['t', 20]]), arrivalMs: timeMs });

/** Feeds readings at 1 s; returns [time s, flags] of every result released, in order. */
function run(p: FrameProcessor<number>, readings: Array<number | null>): Array<[number, string]> {
  const out: Array<[number, string]> = [];
  readings.forEach((x, i) => {
    for (const d of p.onFrame(frame(i * 1000, x), i, i * 1000)) out.push([d.frame.timeMs / 1000, d.results[0].flags.join('+')]);
  });
  return out;
}

describe('FrameProcessor: instrument health of the readings decided with the result', () => {
  it('holds the frame of an excursion until the next reading judges it, then flags it reading_spike', () => {
    const p = new FrameProcessor<number>(structure({ flatline: { enabled: false } }));
    const got = run(p, [100, 101, 99, 100, 102, 100, 400, 101, 100]);
    // 400 stands 300 from the median 100 (limit max(3 x 1.4826 x 1, 10) = 10): held; 101 is back.
    expect(got).toEqual([[0, ''], [1, ''], [2, ''], [3, ''], [4, ''], [5, ''], [6, 'reading_spike'], [7, ''], [8, '']]);
    expect(p.counts.heldForScreen).toBe(1);
  });

  it('a step that stays is a real change: released unflagged once SPIKE_MAX_SAMPLES readings stayed out', () => {
    const p = new FrameProcessor<number>(structure({ flatline: { enabled: false } }));
    const got = run(p, [100, 101, 99, 100, 102, 100, 400, 401, 399, 400]);
    expect(got.slice(6)).toEqual([[6, ''], [7, ''], [8, ''], [9, '']]);
    // 6 and 7 were both held (a two-reading excursion could still be a spike) and came out with
    // the reading at 8, which showed the step stays.
    expect(p.counts.heldForScreen).toBe(2);
  });

  it('releases an unjudged excursion flagged reading_suspect when its wait runs out on the pipeline clock', () => {
    const p = new FrameProcessor<number>(structure({ flatline: { enabled: false } }));
    run(p, [100, 101, 99, 100, 102, 100]);
    expect(p.onFrame(frame(6000, 400), 6, 6000)).toEqual([]);
    const waitMs = SCREEN_WAIT_INTERVALS * 1000;
    expect(p.onTick(6000 + waitMs - 1)).toEqual([]);
    const [released] = p.onTick(6000 + waitMs);
    expect(released.results[0].flags).toEqual(['reading_suspect']);
    expect(p.counts.screenTimeouts).toBe(1);
  });

  it('a null reading does not judge the excursion; the next usable one does', () => {
    const p = new FrameProcessor<number>(structure({ flatline: { enabled: false } }));
    const got = run(p, [100, 101, 99, 100, 102, 100, 400, null, 100]);
    expect(got.slice(6)).toEqual([[6, 'reading_spike'], [7, 'element_missing+underdetermined'], [8, '']]);
  });

  it('flags reading_flatline once the channel has not changed over the whole window', () => {
    const p = new FrameProcessor<number>(structure({ spike: { enabled: false } }));
    const got = run(p, [100, 100, 100, 100, 100, 100, 101]);
    // The run covers 4 s at t = 4 s: spread 0 <= tolerance 0 from then on; 101 at 6 s breaks it.
    expect(got).toEqual([[0, ''], [1, ''], [2, ''], [3, ''], [4, 'reading_flatline'], [5, 'reading_flatline'], [6, '']]);
  });

  it('without an alarms section nothing is screened and nothing waits', () => {
    const s = compileOrThrow(baseDoc(
        [{ id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }], temperature_sensors: ['tc'], temperature: { mode: 'last' } }],
      [microGauge('g', 'c1')], {
        loggers: [{ id: 'lg', expected_interval_s: 1 }],
        temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'lg', channel: 't' } }],
      },
    ));
    const got = run(new FrameProcessor<number>(s), [100, 101, 99, 100, 102, 100, 400, 101]);
    expect(got.map(([t, f]) => `${t}${f}`)).toEqual(['0', '1', '2', '3', '4', '5', '6', '7']);
  });

  it('drops a spiked temperature reading before any result uses it; a reading that stands out waits for the next', () => {
    // Thermocouple `tc` on logger `th` (10 s scans), joined by interpolation with a 30 s wait; degC spikes beyond 2 degC.
    const s = compileOrThrow(baseDoc(
      [{ id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }], temperature_sensors: ['tc'],
        temperature: { mode: 'interpolate', max_age_s: 60, max_wait_s: 30 } }],
      [microGauge('g', 'c1')],
      {
        loggers: [{ id: 'lg', expected_interval_s: 1 }, { id: 'th', expected_interval_s: 10 }],
        temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'th', channel: 't' } }],
        alarms: {
          levels: ['advisory'], rules: [], acknowledgement: { allowed_users: { structural: ['eng-a'], health: ['tech-b'] } },
          health: { level: 'advisory', spike: { window_samples: 5, k_mads: 3, min_deviation_by_unit: { degC: 2 } }, flatline: { enabled: false } },
        },
      },
    ));
    const p = new FrameProcessor<string>(s);
    const th = (timeMs: number, t: number): LoggerFrame =>
      ({ structureId: 'test-structure', loggerId: 'th', timeMs, seq: null, values: new Map([['t', t]]), arrivalMs: timeMs });
    const lg = (timeMs: number): LoggerFrame =>
      ({ structureId: 'test-structure', loggerId: 'lg', timeMs, seq: null, values: new Map([['c1', 100]]), arrivalMs: timeMs });
    for (let k = 0; k < 6; k++) p.onFrame(th(k * 10_000, 20 + 0.1 * (k % 2)), `th${k}`, k * 10_000);
    expect(p.onFrame(lg(55_000), 'a', 55_000)).toEqual([]); // waits for a reading after 55 s
    expect(p.onFrame(th(60_000, 45), 'th6', 60_000).map((d) => d.message)).toEqual(['th6']); // 25 degC off: held, not used
    const done = p.onFrame(th(70_000, 20.1), 'th7', 70_000); // back: 45 was a spike, dropped
    expect(done.map((d) => d.message)).toEqual(['a', 'th7']);
    // Interpolated between 50 s (20.1) and 70 s (20.1), never through 45: 20.1 degC, no flag.
    expect(done[0].results[0].values.temperature_degC).toBeCloseTo(20.1, 12);
    expect(done[0].results[0].flags).toEqual([]);
    expect(p.counts.temperatureSpikes).toBe(1);
  });
});
