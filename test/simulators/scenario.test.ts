import { describe, expect, it } from 'vitest';
import { vonMises2 } from '../../src/mechanics/principal.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { endReaction, middleReaction, momentAt } from '../../simulators/influence.js';
import { mulberry32 } from '../../simulators/prng.js';
import { createSimulation, type TruthLine } from '../../simulators/run.js';
import { parseScenario } from '../../simulators/scenario.js';
import { deckTemperatures } from '../../simulators/thermal-model.js';
import { brannock, START_MS } from './support.js';

describe('influence lines of the two-span beam', () => {
  it('match the beam-table values for a load at the centre of one span', () => {
    // Two equal spans, concentrated load P at the centre of one span: R_B = 11/16 P, R_A = 13/32 P,
    // M under the load = 13/64 P L, M over the middle support = -3/32 P L
    // (AISC Steel Construction Manual, beam diagrams for continuous beams; from memory).
    const L = 32;
    expect(middleReaction(16, L)).toBeCloseTo(11 / 16, 12);
    expect(endReaction(16, L)).toBeCloseTo(13 / 32, 12);
    expect(momentAt(16, 16, L)).toBeCloseTo((13 / 64) * L, 12);
    expect(momentAt(L, 16, L)).toBeCloseTo((-3 / 32) * L, 12);
    // A load over a support carries straight down: no moment anywhere.
    expect(momentAt(16, L, L)).toBeCloseTo(0, 12);
  });
});

describe('prng', () => {
  it('Box-Muller deviates have mean 0 and sd 1 (within 3 standard errors over 20000)', () => {
    const r = mulberry32(5);
    let s = 0, s2 = 0;
    const n = 20000;
    for (let i = 0; i < n; i++) { const g = r.gaussian(); s += g; s2 += g * g; }
    expect(Math.abs(s / n)).toBeLessThan(3 / Math.sqrt(n));
    expect(Math.abs(Math.sqrt(s2 / n) - 1)).toBeLessThan(3 / Math.sqrt(2 * n));
  });
});

describe('scenario', async () => {
  const s = await brannock();
  const D = 600;
  const opts = { seed: 5, start_ms: START_MS, duration_s: D, day_s: D, faults: [] as [] };
  const truth = (scn: ReturnType<typeof defaultScenario>, group: string) =>
    [...createSimulation(s, scn).scans()].flatMap((x) => x.truth).filter((t) => t.group === group);
  const flange = truth(defaultScenario(opts), 'flange-north-mid1');

  it('the heavy vehicle gives a bottom-flange von Mises well above normal traffic', () => {
    const vm = (t: TruthLine) => vonMises2(t.stress_MPa[0], t.stress_MPa[1], t.stress_MPa[2]);
    const heavyFrom = START_MS + 300_000, heavyTo = heavyFrom + 15_000;
    const during = Math.max(...flange.filter((t) => t.time_ms >= heavyFrom && t.time_ms < heavyTo).map(vm));
    const normal = Math.max(...flange.filter((t) => t.time_ms < heavyFrom || t.time_ms >= heavyTo).map(vm));
    expect(during).toBeGreaterThan(2 * normal);
    expect(during).toBeGreaterThan(60);
    expect(normal).toBeGreaterThan(10); // trucks are in the traffic
  });

  it('slab top warmer than the soffit in the afternoon, cooler before dawn', () => {
    const scn = parseScenario({ seed: 1, start_ms: Date.UTC(2025, 5, 1, 0), duration_s: 86400 });
    const at = (h: number) => deckTemperatures(scn, h * 3600);
    expect(at(15).slabTop - at(15).slabBottom).toBeGreaterThan(5);
    expect(at(5).slabTop).toBeLessThan(at(5).slabBottom);
    expect(Math.abs(at(15).steelNorth - at(15).air)).toBeLessThan(1);
  });

  it('the seized bearing adds -fraction x E x alpha x (temperature rise) to the web longitudinal stress', () => {
    const free = truth(defaultScenario(opts), 'web-north-pier');
    const scn = defaultScenario(opts);
    const noRestraint = truth(parseScenario({ ...scn, restraint: null }), 'web-north-pier');
    const r = scn.restraint!;
    const seize = deckTemperatures(scn, r.start_s);
    const seizeC = 0.5 * (seize.steelNorth + seize.steelSouth);
    let checked = 0;
    free.forEach((t, i) => {
      const t_s = (t.time_ms - START_MS) / 1000;
      const inEpisode = t_s >= r.start_s && t_s < r.end_s;
      const steel = deckTemperatures(scn, t_s).steelNorth;
      const expected = inEpisode ? -r.fraction * 210000 * 12e-6 * Math.max(0, steel - seizeC) : 0;
      expect(t.stress_MPa[0] - noRestraint[i].stress_MPa[0]).toBeCloseTo(expected, 9);
      if (inEpisode && expected < -5) checked++;
    });
    expect(checked).toBeGreaterThan(100); // the episode builds to several MPa of compression
  });
});
