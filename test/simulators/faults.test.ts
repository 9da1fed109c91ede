import { describe, expect, it } from 'vitest';
import { BIT_RESIDUAL_HIGH } from '../../src/mechanics/evaluate-group.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import type { FaultLogEntry } from '../../simulators/faults.js';
import { createSimulation, type SimScan } from '../../simulators/run.js';
import { brannock, evaluateFromScan, START_MS } from './support.js';

const DURATION_S = 300;

async function runs() {
  const s = await brannock();
  const opts = { seed: 11, start_ms: START_MS, duration_s: DURATION_S, day_s: DURATION_S };
  const faulty = createSimulation(s, defaultScenario(opts));
  const clean = createSimulation(s, defaultScenario({ ...opts, faults: [] }));
  return { s, faulty, scans: [...faulty.scans()], cleanScans: [...clean.scans()] };
}

const entry = (log: FaultLogEntry[], kind: string) => log.find((e) => e.kind === kind)!;
const inWindow = (e: FaultLogEntry, t: number) => t >= e.start_ms && (e.end_ms === null || t < e.end_ms);
const ofLogger = (scans: SimScan[], id: string) => scans.filter((x) => x.loggerId === id);

describe('faults appear where the fault log says', async () => {
  const { s, faulty, scans, cleanScans } = await runs();
  const log = faulty.faultLog;

  it('lists every fault with its expected health alarm', () => {
    expect(log.map((e) => e.kind).sort()).toEqual(['clock_drift', 'debond', 'dropout', 'open_circuit', 'silent', 'spikes']);
    expect(entry(log, 'dropout').expected_health).toEqual(['channel_missing', 'result_incomplete']);
    expect(entry(log, 'open_circuit').expected_health).toEqual(['out_of_range', 'result_incomplete']);
    expect(entry(log, 'silent').expected_health).toEqual(['no_data', 'temperature_stale']);
    expect(entry(log, 'debond').expected_health).toEqual(['residual_high']);
  });

  it('dropout: the channel is null exactly inside its window', () => {
    const e = entry(log, 'dropout');
    const span = ofLogger(scans, e.logger);
    const nulls = span.filter((x) => x.values[e.channel!] === null);
    expect(nulls.length).toBe(span.filter((x) => inWindow(e, x.trueMs)).length);
    expect(nulls.length).toBe(e.end_ms! / 100 - e.start_ms / 100); // 10 Hz logger: one null per 100 ms
    for (const x of span) expect(x.values[e.channel!] === null).toBe(inWindow(e, x.trueMs));
  });

  it('open circuit: readings outside the valid range exactly inside its window', () => {
    const e = entry(log, 'open_circuit');
    for (const x of ofLogger(scans, e.logger)) {
      const v = x.values[e.channel!]!;
      expect(v > 5000 || v < -5000).toBe(inWindow(e, x.trueMs)); // valid_range [-5000, 5000] of rf-nm-b
    }
  });

  it('spikes: the reading departs from the fault-free run by the magnitude at the logged scans only', () => {
    const e = entry(log, 'spikes');
    expect(e.spike_times_ms!.length).toBeGreaterThanOrEqual(6);
    const clean = new Map(ofLogger(cleanScans, e.logger).map((x) => [x.trueMs, x.values[e.channel!]!]));
    let seen = 0;
    for (const x of ofLogger(scans, e.logger)) {
      const d = x.values[e.channel!]! - clean.get(x.trueMs)!;
      const spiked = e.spike_times_ms!.includes(x.trueMs);
      expect(Math.abs(d - (spiked ? 0.25 : 0))).toBeLessThan(1e-9);
      if (spiked) seen++;
    }
    expect(seen).toBe(e.spike_times_ms!.length);
  });

  it('silent logger: no scans inside its window, scans either side', () => {
    const e = entry(log, 'silent');
    const th = ofLogger(scans, e.logger);
    expect(th.filter((x) => inWindow(e, x.trueMs))).toHaveLength(0);
    expect(th.some((x) => x.trueMs < e.start_ms) && th.some((x) => x.trueMs >= e.end_ms!)).toBe(true);
    const gap = Math.max(...th.slice(1).map((x, i) => x.trueMs - th[i].trueMs));
    expect(gap).toBeGreaterThanOrEqual(e.end_ms! - e.start_ms);
  });

  it('clock drift: logger time runs ahead by drift_ppm of the time since the fault began', () => {
    const e = entry(log, 'clock_drift');
    for (const x of ofLogger(scans, e.logger)) {
      const expected = x.trueMs < e.start_ms ? 0 : Math.round(20000e-6 * (x.trueMs - e.start_ms));
      expect(x.loggerMs - x.trueMs).toBe(expected);
      expect(JSON.parse(x.payload).ts).toBe(x.loggerMs);
    }
    const last = ofLogger(scans, e.logger).at(-1)!;
    expect(last.loggerMs - last.trueMs).toBeGreaterThan(3000); // 2 % of 180 s
  });

  it('debond: the redundant rosette fits well before and flags residual_high by the end', () => {
    const e = entry(log, 'debond');
    const g = s.groupsById.get('web-south-pier')!;
    const pier = ofLogger(scans, e.logger);
    const residual = (x: SimScan) => evaluateFromScan(g, x, x.truth.find((t) => t.group === g.config.id)!.temperature_degC).out;
    const before = pier.filter((x) => x.trueMs < e.start_ms).map(residual);
    const end = residual(pier.at(-1)!);
    for (const o of before) expect(o.fitStdErrorMicro).toBeLessThan(5); // noise only: about 1 microstrain
    expect(end.fitStdErrorMicro).toBeGreaterThan(g.model.fitStdErrorLimitMicro);
    expect(end.flags & BIT_RESIDUAL_HIGH).toBe(BIT_RESIDUAL_HIGH);
  });

  it('truth lines name the faults touching their group exactly while active', () => {
    for (const x of scans) {
      for (const t of x.truth) {
        const expected = log.filter((e) => e.groups.includes(t.group) && (e.spike_times_ms ? e.spike_times_ms.includes(x.trueMs) : inWindow(e, x.trueMs)));
        expect(t.faults).toEqual(expected.map((e) => e.id));
      }
    }
  });
});
