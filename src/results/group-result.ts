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

const fin = Number.isFinite;

/**
 * Copies an evaluator output (overwritten on the next sample) into an immutable GroupResult.
 * Only finite values are kept: a quantity that does not apply to the group is absent, never NaN.
 * Each field is stored by its literal name, in RESULT_FIELD_ORDER: the objects of one kind of group
 * then share one layout (a keyed store through a helper, and a delete for the single gauge, made
 * every result a slow dictionary to build and to read).
 */
export function toGroupResult(
  structureId: string, group: CompiledGroup, out: GroupOutput, timeMs: number, seq: number | null,
  extraFlags: number, temperatureAgeS: number,
): GroupResult {
  const values: Partial<Record<ResultQuantity, number>> = {};
  const e = out.strainMicro;
  const t = out.stressMPa;
  // A single gauge reports its axis only; xx duplicates would mislead.
  if (!fin(out.axialStressMPa)) {
    if (fin(e[0])) values.strain_xx_micro = e[0];
    if (fin(t[0])) values.stress_xx_MPa = t[0];
  }
  if (fin(e[1])) values.strain_yy_micro = e[1];
  if (fin(t[1])) values.stress_yy_MPa = t[1];
  if (fin(e[2])) values.strain_zz_micro = e[2];
  if (fin(t[2])) values.stress_zz_MPa = t[2];
  if (fin(e[3])) values.strain_yz_micro = e[3];
  if (fin(t[3])) values.stress_yz_MPa = t[3];
  if (fin(e[4])) values.strain_xz_micro = e[4];
  if (fin(t[4])) values.stress_xz_MPa = t[4];
  if (fin(e[5])) values.strain_xy_micro = e[5];
  if (fin(t[5])) values.stress_xy_MPa = t[5];
  if (fin(out.axialStrainMicro)) values.strain_axial_micro = out.axialStrainMicro;
  if (fin(out.axialStressMPa)) values.stress_axial_MPa = out.axialStressMPa;
  const p = out.principalMPa;
  if (fin(p[0])) values.principal_1_MPa = p[0];
  if (fin(p[1])) values.principal_2_MPa = p[1];
  if (fin(p[2])) values.principal_3_MPa = p[2];
  if (fin(out.principalAngleDeg)) values.principal_angle_deg = out.principalAngleDeg;
  const d = out.principalDir1;
  if (fin(d[0])) values.principal_1_dir_x = d[0];
  if (fin(d[1])) values.principal_1_dir_y = d[1];
  if (fin(d[2])) values.principal_1_dir_z = d[2];
  if (fin(out.maxShearInPlaneMPa)) values.max_shear_in_plane_MPa = out.maxShearInPlaneMPa;
  if (fin(out.maxShearAbsMPa)) values.max_shear_abs_MPa = out.maxShearAbsMPa;
  if (fin(out.vonMisesMPa)) values.von_mises_MPa = out.vonMisesMPa;
  if (fin(out.trescaMPa)) values.tresca_MPa = out.trescaMPa;
  if (fin(out.ratioVonMisesToYield)) values.ratio_von_mises_to_yield = out.ratioVonMisesToYield;
  if (fin(out.ratioTensionToTensile)) values.ratio_tension_to_tensile_strength = out.ratioTensionToTensile;
  if (fin(out.ratioCompressionToCompressive)) values.ratio_compression_to_compressive_strength = out.ratioCompressionToCompressive;
  if (fin(out.residualRmsMicro)) values.residual_rms_micro = out.residualRmsMicro;
  if (fin(out.fitStdErrorMicro)) values.fit_std_error_micro = out.fitStdErrorMicro;
  if (fin(out.temperatureC)) values.temperature_degC = out.temperatureC;
  if (fin(temperatureAgeS)) values.temperature_age_s = temperatureAgeS;
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
