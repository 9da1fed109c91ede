import { describe, expect, it } from 'vitest';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { stressNoiseSd } from '../../simulators/noise-model.js';
import { mulberry32 } from '../../simulators/prng.js';
import { cleanGroupReadings, concreteFreeStrainMicro, noisyReading } from '../../simulators/readings.js';
import { parseScenario, type SignalUnit } from '../../simulators/scenario.js';
import { brannock, groupSpaceStress, START_MS } from './support.js';

const SAMPLES = 6000;

describe('noise model', () => {
  it('the stress error sd matches the propagation through pseudo-inverse and stiffness within 10 %', async () => {
    const s = await brannock();
    const scn = parseScenario({ seed: 3, start_ms: START_MS, duration_s: 1 });
    const unitOf = new Map(s.config.gauges.map((g) => [g.id, g.signal.unit as SignalUnit]));
    const rng = mulberry32(99);
    const tempC = 23.5;
    for (const g of s.groups) {
      const m = g.model;
      const stress = m.n === 3 ? [60, -8, 25] : m.n === 6 ? [-2.5, -0.8, 0.1, 0.2, 0.4, -0.3] : [75];
      const free = m.companion ? concreteFreeStrainMicro(10e-6, tempC, m.zeroTempC, 0) : Number.NaN;
      const clean = new Float64Array(m.m);
      const cleanCompanion = cleanGroupReadings(g, stress, tempC, free, clean);
      // Effective sd per reading: Gaussian sigma with the quantisation step's variance q^2/12 (uniform rounding error; common practice).
      const sdOf = (unit: SignalUnit) => Math.sqrt(scn.noise.sigma[unit] ** 2 + scn.noise.step[unit] ** 2 / 12);
      const units = g.config.elements.map((e) => unitOf.get(e.gauge)!);
      const compUnit = 'companion_gauge' in g.config && g.config.companion_gauge ? unitOf.get(g.config.companion_gauge)! : 'microstrain';
      const predicted = stressNoiseSd(m, clean, tempC, units.map(sdOf), cleanCompanion, sdOf(compUnit));

      const out = createGroupOutput(m.m);
      const raw = new Float64Array(m.m);
      const sum = new Float64Array(m.n);
      const sum2 = new Float64Array(m.n);
      for (let k = 0; k < SAMPLES; k++) {
        for (let i = 0; i < m.m; i++) raw[i] = noisyReading(clean[i], units[i], scn, rng);
        const comp = Number.isNaN(cleanCompanion) ? Number.NaN : noisyReading(cleanCompanion, compUnit, scn, rng);
        evaluateGroup(m, raw, tempC, comp, out);
        groupSpaceStress(g, out).forEach((v, j) => { const e = v - stress[j]; sum[j] += e; sum2[j] += e * e; });
      }
      for (let j = 0; j < m.n; j++) {
        const mean = sum[j] / SAMPLES;
        const sd = Math.sqrt(sum2[j] / SAMPLES - mean * mean);
        // Sampling error of an sd from 6000 samples is about 1/sqrt(2 x 6000) = 0.9 %: 10 % is a real check.
        expect(Math.abs(sd / predicted[j] - 1), `${g.config.id} component ${j}: sd ${sd} vs ${predicted[j]}`).toBeLessThan(0.1);
        expect(Math.abs(mean)).toBeLessThan(4 * predicted[j] / Math.sqrt(SAMPLES) + 1e-3 * predicted[j]);
        expect(predicted[j]).toBeGreaterThan(0);
      }
    }
  });
});
