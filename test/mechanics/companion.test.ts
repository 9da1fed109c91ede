import { describe, expect, it } from 'vitest';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import { baseDoc, compileOrThrow } from '../support/structures.js';

/**
 * A concrete cluster whose free strain is measured by an unstressed companion gauge with transverse
 * sensitivity. Every gauge here reads total strain (a zero thermal-output curve characterised on a
 * zero-expansion reference), so the hand calculation is the transverse-sensitivity relation alone.
 */
const CONCRETE = { id: 'concrete', kind: 'isotropic', E_MPa: 33000, nu: 0.2, alpha_per_degC: 10e-6 };
const DIRS = [[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [0, 1, 1], [1, 0, 1]];
const T0 = 20, T = 28.5; // dT 8.5 degC: free thermal strain 10e-6 x 8.5 = 85 microstrain
const KT = 0.02, NU0 = 0.285;

function gauge(id: string, ch: string, kt: number) {
  return {
    id, kind: 'embedded_resistance', channel: { logger: 'lg', channel: ch }, signal: { unit: 'microstrain' },
    zero_reading: 0, zero_temperature_degC: T0, ...(kt === 0 ? {} : { transverse_sensitivity: kt, transverse_calibration_nu: NU0 }),
    thermal_output: { coefficients_micro: [0], characterised_on_alpha_per_degC: 0 },
  };
}

function cluster() {
  const gauges = [...DIRS.map((_, i) => gauge(`e${i}`, `c${i}`, 0)), gauge('free', 'cf', KT)];
  const doc = baseDoc([{
    id: 's', kind: 'solid_cluster', material: 'concrete', zone: 'z', location: 'bench',
    elements: DIRS.map((d, i) => ({ gauge: `e${i}`, direction: d })), companion_gauge: 'free',
  }], gauges, { materials: [CONCRETE] });
  return compileOrThrow(doc).groups[0].model;
}

describe('companion gauge with transverse sensitivity', () => {
  // Hand calculation. ASTM E251 definition of Kt: a gauge calibrated on a beam of Poisson ratio nu0
  // indicates (eps_a + Kt eps_t) / (1 - nu0 Kt). The companion is free: eps_a = eps_t = 85.
  //   indicated = 85 x (1 + 0.02) / (1 - 0.285 x 0.02) = 85 x 1.02 / 0.9943 = 87.19702 microstrain.
  // Taken as the free strain without its row, it is 2.19702 microstrain too much in every direction:
  // an isotropic strain error, stress error E / (1 - 2 nu) x 2.19702e-6 = 55000 x 2.19702e-6 = 0.12084 MPa
  // on every normal stress (isotropic Hooke's law, common practice).
  const companionReads = (85 * 1.02) / 0.9943;
  it('the hand calculation gives 87.197 microstrain and 0.121 MPa today', () => {
    expect(companionReads).toBeCloseTo(87.19702, 5);
    expect((33000 / (1 - 2 * 0.2)) * (companionReads - 85) * 1e-6).toBeCloseTo(0.12084, 5);
  });

  it('recovers the free strain exactly: a free cluster carries no stress', () => {
    const g = cluster();
    const out = createGroupOutput(g.m);
    evaluateGroup(g, Float64Array.from(DIRS, () => 85), T, companionReads, out);
    expect(out.flags).toBe(0);
    for (let k = 0; k < 6; k++) expect(Math.abs(out.stressMPa[k])).toBeLessThan(1e-9);
    for (let i = 0; i < 6; i++) expect(Math.abs(out.elementMechanicalMicro[i])).toBeLessThan(1e-9);
  });

  it('recovers a uniaxial stress of 4 MPa on top of the free strain', () => {
    // sigma_xx = 4 MPa: exx = 4 / 33000 = 121.212 microstrain, eyy = ezz = -0.2 x 121.212 = -24.242.
    // Each element reads its normal strain n.eps.n plus the free 85 (unit directions: c^2 exx + ...).
    const exx = (4 / 33000) * 1e6, eyy = -0.2 * exx, ezz = eyy;
    const readings = [exx, eyy, ezz, (exx + eyy) / 2, (eyy + ezz) / 2, (exx + ezz) / 2].map((e) => e + 85);
    const g = cluster();
    const out = createGroupOutput(g.m);
    evaluateGroup(g, Float64Array.from(readings), T, companionReads, out);
    expect(out.stressMPa[0]).toBeCloseTo(4, 9);
    for (const k of [1, 2, 3, 4, 5]) expect(Math.abs(out.stressMPa[k])).toBeLessThan(1e-9);
  });
});
