import { describe, expect, it } from 'vitest';
import { hampelStep, type HampelState } from '../../src/alarms/engine/hampel.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { createSimulation } from '../../simulators/run.js';
import { brannock, START_MS } from './support.js';

/**
 * The spike test against the simulator's traffic: every channel of every logger, judged with the
 * example structure's spike settings, over many seeds. An injected spike is a scan of the fault
 * log's spike_times_ms (consecutive scans happen: a two-reading excursion).
 */
const SEEDS = 20;
const DURATION_S = 120;

async function countSpikes(seed: number, vehiclesPerMin: number) {
  const s = await brannock();
  const spike = s.alarms!.health.spike;
  const sim = createSimulation(s, defaultScenario({ seed, start_ms: START_MS, duration_s: DURATION_S, day_s: DURATION_S, vehicles_per_min: vehiclesPerMin }));
  const injected = new Set(sim.faultLog.filter((e) => e.kind === 'spikes')
    .flatMap((e) => e.spike_times_ms!.map((t) => `${e.logger}/${e.channel}@${t}`)));
  const channels = new Map(sim.plan.loggers.map((l) => [l.id, l.channels]));
  const state = new Map<string, { hampel: HampelState; heldMs: number[] }>();
  const found = new Set<string>();
  const outside: string[] = [];
  for (const scan of sim.scans()) {
    for (const ch of channels.get(scan.loggerId)!) {
      const x = scan.values[ch.id];
      if (x === null || x === undefined || x < ch.validMin || x > ch.validMax) continue; // as the engine: usable, in range
      const key = `${scan.loggerId}/${ch.id}`;
      let st = state.get(key);
      if (st === undefined) state.set(key, (st = { hampel: { window: [] }, heldMs: [] }));
      const v = hampelStep(st.hampel, x, spike.window_samples, spike.k_mads, spike.min_deviation_by_unit[ch.unit] ?? spike.min_deviation);
      for (const t of st.heldMs.splice(0, v.ended)) {
        if (!v.spike) continue;
        const id = `${key}@${t}`;
        if (injected.has(id)) found.add(id);
        else outside.push(`${id} (deviation ${v.deviation}, limit ${v.limit})`);
      }
      if (v.held) st.heldMs.push(scan.trueMs);
    }
  }
  return { injected: injected.size, found: found.size, outside };
}

describe('spike test on simulated traffic', () => {
  for (const vehiclesPerMin of [8, 25]) {
    it(`${SEEDS} seeds of ${DURATION_S} s, ${vehiclesPerMin} vehicles a minute: every injected spike found, none outside them`, async () => {
      let injected = 0, found = 0;
      const outside: string[] = [];
      for (let seed = 1; seed <= SEEDS; seed++) {
        const r = await countSpikes(seed, vehiclesPerMin);
        injected += r.injected;
        found += r.found;
        outside.push(...r.outside.map((o) => `seed ${seed}: ${o}`));
      }
      console.log(`spike test, ${vehiclesPerMin} vehicles/min: ${injected} injected, ${found} found, ${injected - found} missed, ${outside.length} outside the injected ones`);
      expect(injected).toBeGreaterThanOrEqual(SEEDS * 6); // 8 a run, fewer when two land on one scan
      expect(outside).toEqual([]);
      expect(found).toBe(injected);
    });
  }
});
