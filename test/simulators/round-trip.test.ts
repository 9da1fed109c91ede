import { describe, expect, it } from 'vitest';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { createSimulation } from '../../simulators/run.js';
import { brannock, evaluateFromScan, START_MS } from './support.js';

describe('truth round trip (readings without noise back through evaluateGroup)', () => {
  it('recovers the true stress of every group within 1e-6 MPa over a compressed day with traffic, heavy vehicle and restraint', async () => {
    const s = await brannock();
    const scn = defaultScenario({ seed: 7, start_ms: START_MS, duration_s: 240, day_s: 240, faults: [], noise: false, vehicles_per_min: 20 });
    let checked = 0;
    let worst = 0;
    const biggest = new Map<string, number>();
    for (const scan of createSimulation(s, scn).scans()) {
      for (const t of scan.truth) {
        const g = s.groupsById.get(t.group)!;
        const { out, stress } = evaluateFromScan(g, scan, t.temperature_degC);
        expect(out.flags).toBe(0);
        stress.forEach((v, k) => { worst = Math.max(worst, Math.abs(v - t.stress_MPa[k])); });
        biggest.set(t.group, Math.max(biggest.get(t.group) ?? 0, ...t.stress_MPa.map(Math.abs)));
        checked++;
      }
    }
    expect(worst).toBeLessThan(1e-6);
    // Guard against a vacuous pass: every group was checked and carried real stress.
    expect(checked).toBeGreaterThan(9000);
    expect(biggest.size).toBe(5);
    for (const [, peak] of biggest) expect(peak).toBeGreaterThan(0.5);
  });
});
