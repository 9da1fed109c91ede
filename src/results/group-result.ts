import type { CompiledGroup } from '../config/compile.js';
import type { GroupOutput } from '../mechanics/group-model.js';
import { flagsFromBits } from '../model/quality.js';
import type { GroupResult, ResultQuantity } from '../model/result.js';
import { VOIGT_ORDER } from '../mechanics/voigt.js';

// Names built once: this runs for every group of every frame.
const STRAIN_NAMES = VOIGT_ORDER.map((c) => `strain_${c}_micro` as ResultQuantity);
const STRESS_NAMES = VOIGT_ORDER.map((c) => `stress_${c}_MPa` as ResultQuantity);

/**
 * The order toGroupResult puts values in (strain and stress interleaved per component, then the
 * rest): a result rebuilt in this order (the storage ring, pipeline/event-windows.ts) iterates its
 * fields exactly as the original, so its line is the same bytes.
 */
export const RESULT_FIELD_ORDER: readonly ResultQuantity[] = [
  ...VOIGT_ORDER.flatMap((_, i) => [STRAIN_NAMES[i], STRESS_NAMES[i]]),
  'strain_axial_micro', 'stress_axial_MPa', 'principal_1_MPa', 'principal_2_MPa', 'principal_3_MPa', 'principal_angle_deg',
  'principal_1_dir_x', 'principal_1_dir_y', 'principal_1_dir_z', 'max_shear_in_plane_MPa', 'max_shear_abs_MPa', 'von_mises_MPa', 'tresca_MPa',
  'ratio_von_mises_to_yield', 'ratio_tension_to_tensile_strength', 'ratio_compression_to_compressive_strength',
  'residual_rms_micro', 'fit_std_error_micro', 'temperature_degC', 'temperature_age_s',
];

function put(values: Partial<Record<ResultQuantity, number>>, k: ResultQuantity, v: number): void {
  if (Number.isFinite(v)) values[k] = v;
}

/**
 * Copies an evaluator output (overwritten on the next sample) into an immutable GroupResult.
 * Only finite values are kept: a quantity that does not apply to the group is absent, never NaN.
 */
export function toGroupResult(
  structureId: string, group: CompiledGroup, out: GroupOutput, timeMs: number, seq: number | null,
  extraFlags: number, temperatureAgeS: number,
): GroupResult {
  const values: Partial<Record<ResultQuantity, number>> = {};
  for (let i = 0; i < 6; i++) {
    put(values, STRAIN_NAMES[i], out.strainMicro[i]);
    put(values, STRESS_NAMES[i], out.stressMPa[i]);
  }
  if (Number.isFinite(out.axialStressMPa)) {
    // A single gauge reports its axis only; xx duplicates would mislead.
    delete values.strain_xx_micro;
    delete values.stress_xx_MPa;
  }
  put(values, 'strain_axial_micro', out.axialStrainMicro);
  put(values, 'stress_axial_MPa', out.axialStressMPa);
  put(values, 'principal_1_MPa', out.principalMPa[0]);
  put(values, 'principal_2_MPa', out.principalMPa[1]);
  put(values, 'principal_3_MPa', out.principalMPa[2]);
  put(values, 'principal_angle_deg', out.principalAngleDeg);
  put(values, 'principal_1_dir_x', out.principalDir1[0]);
  put(values, 'principal_1_dir_y', out.principalDir1[1]);
  put(values, 'principal_1_dir_z', out.principalDir1[2]);
  put(values, 'max_shear_in_plane_MPa', out.maxShearInPlaneMPa);
  put(values, 'max_shear_abs_MPa', out.maxShearAbsMPa);
  put(values, 'von_mises_MPa', out.vonMisesMPa);
  put(values, 'tresca_MPa', out.trescaMPa);
  put(values, 'ratio_von_mises_to_yield', out.ratioVonMisesToYield);
  put(values, 'ratio_tension_to_tensile_strength', out.ratioTensionToTensile);
  put(values, 'ratio_compression_to_compressive_strength', out.ratioCompressionToCompressive);
  put(values, 'residual_rms_micro', out.residualRmsMicro);
  put(values, 'fit_std_error_micro', out.fitStdErrorMicro);
  put(values, 'temperature_degC', out.temperatureC);
  put(values, 'temperature_age_s', temperatureAgeS);
  const elementStrainMicro: Record<string, number> = {};
  const elements = group.model.elements;
  for (let i = 0; i < elements.length; i++) {
    const v = out.elementMechanicalMicro[i];
    if (Number.isFinite(v)) elementStrainMicro[elements[i].gaugeId] = v;
  }
  return {
    structureId,
    groupId: group.config.id,
    zone: group.config.zone,
    loggerId: group.loggerId,
    timeMs,
    seq,
    values,
    elementStrainMicro,
    flags: flagsFromBits(out.flags | extraFlags),
  };
}
