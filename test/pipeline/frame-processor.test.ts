import { describe, expect, it } from 'vitest';
import { compileOrThrow, baseDoc, microGauge } from '../support/structures.js';
import { FrameProcessor } from '../../src/pipeline/frame-processor.js';
import type { LoggerFrame } from '../../src/model/raw-message.js';

/** A single steel gauge on logger `lg`, a thermocouple on logger `th`; join settings vary per test. */
function structure(temperature: Record<string, unknown>) {
  const doc = baseDoc(
    [{ id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }], temperature_sensors: ['tc'], temperature }],
    [microGauge('g', 'c1')],
    {
      loggers: [{ id: 'lg', expected_interval_s: 1 }, { id: 'th', expected_interval_s: 10 }],
      temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'th', channel: 't' } }],
    },
  );
  return compileOrThrow(doc);
}

const frame = (loggerId: string, timeMs: number, values: Record<string, number | null>, arrivalMs = timeMs): LoggerFrame =>
  ({ structureId: 'test-structure', loggerId, timeMs, seq: null, values: new Map(Object.entries(values)), arrivalMs });

describe('FrameProcessor', () => {
  it('computes at the last temperature and flags it stale beyond max_age_s', () => {
    const p = new FrameProcessor<string>(structure({ mode: 'last', max_age_s: 30 }));
    p.onFrame(frame('th', 0, { t: 30 }), 'th0', 0);
    const [fresh] = p.onFrame(frame('lg', 10_000, { c1: 100 }), 'a', 10_000);
    expect(fresh.results[0].values.temperature_degC).toBe(30);
    expect(fresh.results[0].values.temperature_age_s).toBe(10);
    expect(fresh.results[0].flags).toEqual([]);
    const [stale] = p.onFrame(frame('lg', 40_001, { c1: 100 }), 'b', 40_001);
    expect(stale.results[0].flags).toEqual(['temperature_stale']);
    // Microstrain gauge with no thermal output is matched to its host: stress = E eps (Hooke's law).
    expect(stale.results[0].values.stress_axial_MPa).toBeCloseTo(21, 12);
  });

  it('holds a frame for a later temperature, interpolates, and keeps order per logger', () => {
    const p = new FrameProcessor<string>(structure({ mode: 'interpolate', max_age_s: 60, max_wait_s: 5 }));
    p.onFrame(frame('th', 0, { t: 10 }), 'th0', 0);
    expect(p.onFrame(frame('lg', 2_000, { c1: 1 }), 'a', 2_000)).toEqual([]);
    expect(p.onFrame(frame('lg', 3_000, { c1: 2 }), 'b', 3_000)).toEqual([]);
    const done = p.onFrame(frame('th', 4_000, { t: 20 }), 'th1', 4_000);
    expect(done.map((d) => d.message)).toEqual(['a', 'b', 'th1']);
    expect(done[0].results[0].values.temperature_degC).toBeCloseTo(15, 12);
    expect(done[1].results[0].values.temperature_degC).toBeCloseTo(17.5, 12);
  });

  it('stops waiting when max_wait_s of pipeline clock has passed, and falls back to the last reading', () => {
    const p = new FrameProcessor<string>(structure({ mode: 'interpolate', max_age_s: 60, max_wait_s: 5 }));
    p.onFrame(frame('th', 0, { t: 10 }), 'th0', 0);
    expect(p.onFrame(frame('lg', 1_000, { c1: 1 }), 'a', 1_000)).toEqual([]);
    expect(p.onTick(5_999)).toEqual([]);
    const [released] = p.onTick(6_000);
    expect(released.message).toBe('a');
    expect(released.results[0].values.temperature_degC).toBe(10);
    expect(p.flush()).toEqual([]);
  });

  it('flags a missing temperature, or withholds the stress when configured to', () => {
    const computed = new FrameProcessor<string>(structure({ mode: 'last' })).onFrame(frame('lg', 0, { c1: 100 }), 'a', 0)[0].results[0];
    expect(computed.flags).toEqual(['temperature_missing']);
    expect(computed.values.stress_axial_MPa).toBeCloseTo(21, 12);
    const p = new FrameProcessor<string>(structure({ mode: 'last', withhold_when_missing: true }));
    const withheld = p.onFrame(frame('lg', 0, { c1: 100 }), 'a', 0)[0].results[0];
    expect(withheld.flags).toEqual(['temperature_missing']);
    expect(withheld.values).toEqual({});
    expect(p.counts.withheldResults).toBe(1);
  });

  it('flags a missing element and refuses out-of-range temperatures', () => {
    const p = new FrameProcessor<string>(structure({ mode: 'last' }));
    p.onFrame(frame('th', 0, { t: 500 }), 'th0', 0); // beyond the default valid range [-50, 100] degC
    expect(p.counts.temperatureRejected).toBe(1);
    const r = p.onFrame(frame('lg', 0, { c1: null }), 'a', 0)[0].results[0];
    expect(r.flags).toEqual(['temperature_missing', 'element_missing', 'underdetermined']);
    expect(r.values.stress_axial_MPa).toBeUndefined();
  });
});

describe('FrameProcessor: a wait that ran out is decided the same with or without a tick before the next frame', () => {
  // Live, the wall-clock tick may fall between a held frame's deadline and the next message; replay
  // ticks on a grid of arrival times may not. Both must compute the held frame with what was known
  // at its deadline, not with a temperature that arrived after it.
  const run = (tickAt: number | null) => {
    const p = new FrameProcessor<string>(structure({ mode: 'interpolate', max_age_s: 60, max_wait_s: 5 }));
    const out = [...p.onFrame(frame('th', 0, { t: 10 }), 'th0', 0), ...p.onFrame(frame('lg', 1000, { c1: 100 }), 'lg1', 1000)];
    if (tickAt !== null) out.push(...p.onTick(tickAt));
    out.push(...p.onFrame(frame('th', 7000, { t: 24 }), 'th1', 7000)); // after lg1's deadline (1000 + 5000)
    return out.map((f) => `${f.message}:${f.results.map((r) => `${r.values.temperature_degC}`).join(',')}`);
  };
  it('same frames, same order, same temperature', () => {
    expect(run(6500)).toEqual(['th0:', 'lg1:10', 'th1:']);
    expect(run(null)).toEqual(run(6500));
  });
});

describe('FrameProcessor: release order does not depend on when the clock ticks', () => {
  /** Gauges on two loggers waiting for the thermocouple on `th`, one for 5 s and one for 2 s. */
  function twoLoggers() {
    const wait = (s: number) => ({ mode: 'interpolate', max_age_s: 60, max_wait_s: s });
    return compileOrThrow(baseDoc(
      [
        { id: 'long', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g1' }], temperature_sensors: ['tc'], temperature: wait(5) },
        { id: 'short', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g2' }], temperature_sensors: ['tc'], temperature: wait(2) },
      ],
      [microGauge('g1', 'c1'), { ...microGauge('g2', 'c1'), channel: { logger: 'lg2', channel: 'c1' } }],
      {
        loggers: [{ id: 'lg', expected_interval_s: 1 }, { id: 'lg2', expected_interval_s: 1 }, { id: 'th', expected_interval_s: 10 }],
        temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'th', channel: 't' } }],
      },
    ));
  }

  it('releases frames in the order their waits ended, whether one tick or several cover the deadlines', () => {
    const run = (ticks: number[]) => {
      const p = new FrameProcessor<string>(twoLoggers());
      p.onFrame(frame('th', 0, { t: 10 }), 'th0', 0);
      p.onFrame(frame('lg', 1_000, { c1: 1 }), 'long', 1_000); // waits until 6,000
      p.onFrame(frame('lg2', 1_500, { c1: 1 }), 'short', 1_500); // waits until 3,500
      return ticks.flatMap((t) => p.onTick(t)).map((d) => d.message);
    };
    // A replay-like clock (one event after both deadlines) and a live-like one (a tick between them).
    expect(run([7_000])).toEqual(['short', 'long']);
    expect(run([4_000, 7_000])).toEqual(['short', 'long']);
  });
});
