import type { MaterialConfig } from './material-schema.js';
import {
  asymmetry, invertSquare, isPositiveDefinite, isotropicCompliance, orthotropicCompliance,
} from '../mechanics/stiffness.js';

/** A material in the numeric form the group models need: compliance (1/MPa), alpha (1/degC), capacities (MPa). */
export interface MaterialModel {
  id: string;
  /** 6x6 compliance in material axes, Voigt order. */
  compliance: Float64Array;
  /** Free expansion per degC in material axes as a Voigt engineering-strain 6-vector (shear entries 0 unless given). */
  alpha: Float64Array;
  yieldMPa: number;
  tensileMPa: number;
  compressiveMPa: number;
}

/** Compiles a validated material, or returns the reason it is physically impossible. */
export function compileMaterial(m: MaterialConfig): { ok: true; model: MaterialModel } | { ok: false; path: string; reason: string } {
  let compliance: Float64Array;
  let alpha: number[];
  if (m.kind === 'isotropic') {
    compliance = isotropicCompliance(m.E_MPa, m.nu);
    alpha = [m.alpha_per_degC, m.alpha_per_degC, m.alpha_per_degC];
  } else if (m.kind === 'orthotropic') {
    compliance = orthotropicCompliance({
      E1: m.E1_MPa, E2: m.E2_MPa, E3: m.E3_MPa, nu12: m.nu12, nu13: m.nu13, nu23: m.nu23,
      G12: m.G12_MPa, G13: m.G13_MPa, G23: m.G23_MPa,
    });
    if (!isPositiveDefinite(compliance, 6)) {
      return {
        ok: false, path: '',
        reason: 'the engineering constants give a compliance that is not positive definite: no real material has them (check that nu12^2 < E1/E2, nu13^2 < E1/E3, nu23^2 < E2/E3 and 1 - nu12 nu21 - nu23 nu32 - nu13 nu31 - 2 nu21 nu32 nu13 > 0)',
      };
    }
    alpha = [...m.alpha_per_degC];
  } else {
    const c = Float64Array.from(m.stiffness_MPa.flat());
    if (asymmetry(c, 6) > 1e-9) return { ok: false, path: 'stiffness_MPa', reason: 'the stiffness matrix must be symmetric' };
    // Symmetric to rounding: make it exactly so (the Cholesky test refuses the last bit of asymmetry).
    for (let i = 0; i < 6; i++) for (let j = i + 1; j < 6; j++) c[i * 6 + j] = c[j * 6 + i] = 0.5 * (c[i * 6 + j] + c[j * 6 + i]);
    if (!isPositiveDefinite(c, 6)) return { ok: false, path: 'stiffness_MPa', reason: 'the stiffness matrix is not positive definite: the strain energy would not be positive for every strain' };
    compliance = invertSquare(c, 6);
    alpha = [...m.alpha_per_degC];
  }
  return {
    ok: true,
    model: {
      id: m.id,
      compliance,
      alpha: Float64Array.from({ length: 6 }, (_, k) => alpha[k] ?? 0),
      yieldMPa: m.yield_strength_MPa ?? Number.NaN,
      tensileMPa: m.tensile_strength_MPa ?? Number.NaN,
      compressiveMPa: m.compressive_strength_MPa ?? Number.NaN,
    },
  };
}
