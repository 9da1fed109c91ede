import { describe, expect, it } from 'vitest';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { replay } from '../../src/app/replay.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import type { GroupResult } from '../../src/model/result.js';
import type { RawMessage } from '../../src/model/raw-message.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { stressNoiseSd } from '../../simulators/noise-model.js';
import { rawMessageOf } from '../../simulators/outputs.js';
import { createSimulation, type SimScan } from '../../simulators/run.js';
import { parseScenario, type Scenario } from '../../simulators/scenario.js';
import { peaksByGroup } from '../../src/report/peaks.js';
import { brannock, groupSpaceStress, START_MS } from './support.js';

/**
 * "Trusted" means trusted: simulated days with every fault kind, replayed through the pipeline
 * that runs live (replay(): decode, temperature join, channel screen, reduction), result by result
 * (the standard faults, plus spikes on a thermocouple),
 * against the simulator's truth. A result without a quality flag must lie within its noise bound:
 *
 *   bound = 5 sd + |d sigma / d T| |T_used - T_true| + 1e-6 MPa, per stress component, where
 *   sd is the reading noise of the simulator's noise model (Gaussian sigma per signal unit and the
 *   logger's quantisation step q, sd^2 = sigma^2 + q^2/12, common practice) propagated to first
 *   order through the group's reduction and stiffness (simulators/noise-model.ts), and the second
 *   term is what the temperature the pipeline used (thermocouple noise, time between thermocouple
 *   scans, a logger clock running off) does to the stress, by finite difference through the core.
 *   5 sd: a Gaussian error passes it once in about 1.7 million (normal tail, common practice).
 *
 * Short runs (DURATION_S of a day compressed into DAY_S, a fast debonding drift) keep each seed to
 * about a second.
 */
const SEEDS = 20;
const DURATION_S = 120;
/** A day of 3600 s: the temperature moves about 0.01 degC/s, as fast as a sunny morning in about a third of the time. */
const DAY_S = 3600;
const DEBOND_MICRO_PER_H = 360;

const COMPONENTS = ['xx', 'yy', 'zz', 'yz', 'xz', 'xy'] as const;

/** Effective reading sd of a signal code (0 microstrain, 1 mV/V, 2 Hz, 3 digits): sqrt(sigma^2 + step^2 / 12). */
function readingSd(scn: Scenario, signal: number): number {
  const unit = (['microstrain', 'mV/V', 'Hz', 'digits'] as const)[signal];
  return Math.sqrt(scn.noise.sigma[unit] ** 2 + scn.noise.step[unit] ** 2 / 12);
}

/** Group-space stress of a result (plane sx sy txy, solid Voigt 6, single sigma), MPa. */
function resultStress(s: CompiledStructure, r: GroupResult): number[] {
  const g = s.groupsById.get(r.groupId)!;
  const v = r.values;
  if (g.config.kind === 'single') return [v.stress_axial_MPa ?? Number.NaN];
  if (g.config.kind === 'plane_rosette') return [v.stress_xx_MPa, v.stress_yy_MPa, v.stress_xy_MPa].map((x) => x ?? Number.NaN);
  return COMPONENTS.map((c) => v[`stress_${c}_MPa`] ?? Number.NaN);
}

interface Outside { seed: number; group: string; timeMs: number; faults: string[]; ratio: number; errorMPa: number; debondS: number | null }

async function* messagesOf(scans: SimScan[]): AsyncIterable<RawMessage> {
  for (const scan of scans) yield rawMessageOf(scan);
}

async function checkSeed(seed: number) {
  const s = await brannock();
  const base = defaultScenario({ seed, start_ms: START_MS, duration_s: DURATION_S, day_s: DAY_S });
  const scn = parseScenario({
    ...base,
    faults: [
      // The debonding gauge drifts 2.4 microstrain/s (DEBOND_MICRO_PER_H per scenario hour of DAY_S / 24 s).
      ...base.faults.map((f) => (f.kind === 'debond' ? { ...f, drift_micro_per_h: DEBOND_MICRO_PER_H } : f)),
      // Spikes on a thermocouple too (8 degC): the temperature a result is computed from is a reading as
      // well. After the thermal logger's silence, once its spike test has its 15 readings (75 s at 5 s).
      { kind: 'spikes', id: 'spikes-thermal-t3', logger: 'lg-thermal', channel: 't3', start_s: 0.8 * DURATION_S, end_s: 0.93 * DURATION_S, count: 2, magnitude: 8 },
    ],
  });
  const sim = createSimulation(s, scn);
  const scans = [...sim.scans()];
  const summary = await replay({
    structure: s, messages: messagesOf(scans), sink: new MemorySink(), deadLetters: { write: async () => {} },
    runTag: 'check', tickMs: 200, speed: 0, sleep: async () => {}, collectResults: true, alarms: true,
  });
  const byKey = new Map(summary.collected.map((r) => [`${r.groupId}@${r.timeMs}`, r]));
  const outside: Outside[] = [];
  let checked = 0, flagged = 0, worstRatio = 0, strayDrift = 0, strayRising = 0, redundantClean = 0;
  const flagCounts = new Map<string, number>();
  for (const scan of scans) {
    for (const t of scan.truth) {
      const r = byKey.get(`${t.group}@${t.logger_ts_ms}`);
      expect(r, `${t.group} at ${t.logger_ts_ms}`).toBeDefined();
      const debonding = t.faults.some((f) => f.startsWith('debond'));
      if (r!.flags.includes('residual_drift') && !debonding) strayDrift++;
      // Results of redundant groups without a debonding element: what noise alone flags residual_rising.
      const g0 = s.groupsById.get(t.group)!;
      if (g0.model.m > g0.model.n && !debonding) {
        redundantClean++;
        if (r!.flags.includes('residual_rising')) strayRising++;
      }
      if (r!.flags.length > 0) {
        flagged++;
        for (const f of r!.flags) flagCounts.set(f, (flagCounts.get(f) ?? 0) + 1);
        continue;
      }
      const g = s.groupsById.get(t.group)!;
      const raw = Float64Array.from(g.elementChannels, (ch) => scan.values[ch] ?? Number.NaN);
      const comp = g.companion ? scan.values[g.companion.channelId] ?? Number.NaN : Number.NaN;
      const used = r!.values.temperature_degC!;
      const sd = stressNoiseSd(g.model, raw, used, g.model.elements.map((el) => readingSd(scn, el.signal)), comp,
        g.model.companion ? readingSd(scn, g.model.companion.signal) : 0);
      const at = (tc: number) => {
        const out = createGroupOutput(g.model.m);
        evaluateGroup(g.model, raw, tc, comp, out);
        return groupSpaceStress(g, out);
      };
      const up = at(used + 0.5), down = at(used - 0.5);
      const got = resultStress(s, r!);
      let ratio = 0, errorMPa = 0;
      for (let k = 0; k < got.length; k++) {
        const tol = 5 * sd[k] + Math.abs(up[k] - down[k]) * Math.abs(used - t.temperature_degC) + 1e-6;
        ratio = Math.max(ratio, Math.abs(got[k] - t.stress_MPa[k]) / tol);
        errorMPa = Math.max(errorMPa, Math.abs(got[k] - t.stress_MPa[k]));
      }
      worstRatio = Math.max(worstRatio, ratio);
      if (ratio > 1) {
        const debond = sim.faultLog.find((e) => e.kind === 'debond' && t.faults.includes(e.id));
        outside.push({ seed, group: t.group, timeMs: t.time_ms, faults: t.faults, ratio, errorMPa, debondS: debond ? (t.time_ms - debond.start_ms) / 1000 : null });
      }
      checked++;
    }
  }
  // The report's peaks (trusted results only) against the true peak of the spiked rosette: plane-stress
  // von Mises sqrt(sx^2 - sx sy + sy^2 + 3 txy^2) of the true stress (common practice).
  const spiked = sim.faultLog.find((e) => e.kind === 'spikes')!.groups[0];
  const trueVm = Math.max(...scans.flatMap((x) => x.truth.filter((t) => t.group === spiked)
    .map(({ stress_MPa: [sx, sy, txy] }) => Math.sqrt(sx * sx - sx * sy + sy * sy + 3 * txy * txy))));
  const peaks = peaksByGroup(summary.collected).find((p) => p.groupId === spiked)!;
  const peakExcessMPa = peaks.maxVonMises!.value - trueVm;
  const spikeListedApart = peaks.flagged.some((f) => f.kind === 'maxVonMises' && f.flags.includes('reading_spike'));
  const spikeAlarms = summary.transitions.filter((x) => x.kind === 'raised' && x.alarm.ruleId === 'spike');
  return { checked, flagged, flagCounts, peakExcessMPa, spikeListedApart, outside, worstRatio, spikeAlarms, strayDrift, strayRising, redundantClean, faultLog: sim.faultLog };
}

describe('trusted results on replayed simulated days', () => {
  it(`${SEEDS} seeds of ${DURATION_S} s with every fault kind: every result without a flag within its noise bound, but where a drift is below any test's reach`, async () => {
    let checked = 0, flagged = 0, worstRatio = 0, strayDrift = 0, strayRising = 0, redundantClean = 0, worstPeakExcess = 0, spikesNotListed = 0;
    const flagCounts = new Map<string, number>();
    const outside: Outside[] = [];
    const strayAlarms: string[] = [];
    for (let seed = 1; seed <= SEEDS; seed++) {
      const r = await checkSeed(seed);
      checked += r.checked;
      flagged += r.flagged;
      worstRatio = Math.max(worstRatio, r.worstRatio);
      strayDrift += r.strayDrift;
      strayRising += r.strayRising;
      redundantClean += r.redundantClean;
      worstPeakExcess = Math.max(worstPeakExcess, Math.abs(r.peakExcessMPa));
      if (!r.spikeListedApart) spikesNotListed++;
      for (const [f, n] of r.flagCounts) flagCounts.set(f, (flagCounts.get(f) ?? 0) + n);
      outside.push(...r.outside);
      const spiked = r.faultLog.filter((e) => e.kind === 'spikes').map((e) => `${e.logger}/${e.channel}`);
      for (const a of r.spikeAlarms) {
        const subject = a.alarm.subject;
        const ch = subject.kind === 'channel' ? `${subject.loggerId}/${subject.channelId}` : '';
        if (!spiked.includes(ch)) strayAlarms.push(`seed ${seed}: spike alarm on ${ch}`);
      }
    }
    console.log(`trusted results: ${checked} unflagged checked, ${flagged} flagged, ${outside.length} outside the noise bound (worst ${worstRatio.toFixed(2)} x bound); residual_drift outside a debonding gauge: ${strayDrift}; spike alarms off the spiked channel: ${strayAlarms.length}`);
    console.log(`  residual_rising on redundant-group results without a debonding element: ${strayRising} of ${redundantClean} (${(100 * strayRising / redundantClean).toFixed(2)} %)`);
    console.log(`  report peaks of the spiked rosette: within ${worstPeakExcess.toFixed(2)} MPa of the true max von Mises; spike listed apart on ${SEEDS - spikesNotListed} of ${SEEDS} seeds`);
    console.log(`  flags of the flagged results: ${[...flagCounts].map(([f, n]) => `${f} ${n}`).join(', ')}`);
    const classes = new Map<string, { n: number; worstMPa: number; seeds: Set<number>; first: number; last: number }>();
    for (const o of outside) {
      const k = `${o.group} [${o.faults.join(',')}]`;
      const c = classes.get(k) ?? { n: 0, worstMPa: 0, seeds: new Set<number>(), first: Infinity, last: 0 };
      const at = (o.timeMs - START_MS) / 1000;
      c.n++; c.worstMPa = Math.max(c.worstMPa, o.errorMPa); c.seeds.add(o.seed); c.first = Math.min(c.first, at); c.last = Math.max(c.last, at);
      classes.set(k, c);
    }
    for (const [k, c] of classes) console.log(`  ${k}: ${c.n} results, ${c.seeds.size} seeds, worst error ${c.worstMPa.toFixed(2)} MPa, from ${c.first} s to ${c.last} s`);
    // Every fault is flagged wherever it takes a result out of its bound; a debonding gauge too, by
    // residual_rising and then residual_drift (src/pipeline/residual-drift.ts), but for its first
    // second: 10 samples, 2.4 microstrain on the element, a bias of at most 2.1 sd on the stress, where
    // even a test knowing the drift's start and rate (a matched filter: along the residual 0.126 sd per
    // sample, sqrt(1^2 + ... + 10^2) = 19.6, so 2.5 sd) stays below the rising limit (2.58 sd). There a
    // result leaves its bound when its own noise is 3 sd or more (independent of the residual: least
    // squares, common practice); with the rising flag's false rate at 1 %, about 0.2 such results are
    // expected in 20 seeds (0.24, test/pipeline/residual-drift.test.ts). Measured: 1, at 0.9 s, 1.13 x bound.
    expect(outside.filter((o) => o.debondS === null || o.debondS > 1)).toEqual([]);
    expect(outside.length).toBeLessThanOrEqual(2);
    expect(Math.max(0, ...outside.map((o) => o.ratio))).toBeLessThan(1.3);
    expect(strayDrift).toBe(0);
    // Noise alone passes the rising limit on about 1 % of judged samples (the detector's chi-square
    // quantile; its rate is checked on 2 million samples in test/pipeline/residual-drift.test.ts):
    // here 2 % of the redundant results without a debonding element at most.
    expect(strayRising).toBeLessThan(0.02 * redundantClean);
    // A spike of 0.25 mV/V makes about 100 MPa; 2 MPa is a few times the stress noise (measured 0.55 MPa worst).
    expect(worstPeakExcess).toBeLessThan(2);
    expect(spikesNotListed).toBe(0);
    expect(strayAlarms).toEqual([]);
    expect(checked).toBeGreaterThan(SEEDS * 3000);
    expect(worstRatio).toBeGreaterThan(0.2); // the bound is not absurdly loose
  }, 120_000);
});
