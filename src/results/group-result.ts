import type { CompiledGroup } from '../config/compile.js';
import type { GroupOutput } from '../mechanics/group-model.js';
import { flagsFromBits } from '../model/quality.js';
import type { GroupResult, ResultQuantity } from '../model/result.js';
import { VOIGT_ORDER } from '../mechanics/voigt.js';

/**
 * Copies an evaluator output (overwritten on the next sample) into an immutable GroupResult.
 * Only finite values are kept: a quantity that does not apply to the group is absent, never NaN.
 */
export function toGroupResult(
  structureId: string, group: CompiledGroup, out: GroupOutput, timeMs: number, seq: number | null,
  extraFlags: number, temperatureAgeS: number,
): GroupResult {
  const values: Partial<Record<ResultQuantity, number>> = {};
  const put = (k: ResultQuantity, v: number) => { if (Number.isFinite(v)) values[k] = v; };
  for (let i = 0; i < 6; i++) {
    put(`strain_${VOIGT_ORDER[i]}_micro` as ResultQuantity, out.strainMicro[i]);
    put(`stress_${VOIGT_ORDER[i]}_MPa` as ResultQuantity, out.stressMPa[i]);
  }
  if (Number.isFinite(out.axialStressMPa)) {
    // A single gauge reports its axis only; xx duplicates would mislead.
    delete values.strain_xx_micro;
    delete values.stress_xx_MPa;
  }
  put('strain_axial_micro', out.axialStrainMicro);
  put('stress_axial_MPa', out.axialStressMPa);
  put('principal_1_MPa', out.principalMPa[0]);
  put('principal_2_MPa', out.principalMPa[1]);
  put('principal_3_MPa', out.principalMPa[2]);
  put('principal_angle_deg', out.principalAngleDeg);
  put('principal_1_dir_x', out.principalDir1[0]);
  put('principal_1_dir_y', out.principalDir1[1]);
  put('principal_1_dir_z', out.principalDir1[2]);
  put('max_shear_MPa', out.maxShearMPa);
  put('von_mises_MPa', out.vonMisesMPa);
  put('tresca_MPa', out.trescaMPa);
  put('ratio_von_mises_to_yield', out.ratioVonMisesToYield);
  put('ratio_tension_to_tensile_strength', out.ratioTensionToTensile);
  put('ratio_compression_to_compressive_strength', out.ratioCompressionToCompressive);
  put('residual_rms_micro', out.residualRmsMicro);
  put('temperature_degC', out.temperatureC);
  put('temperature_age_s', temperatureAgeS);
  const elementStrainMicro: Record<string, number> = {};
  group.model.elements.forEach((el, i) => {
    const v = out.elementMechanicalMicro[i];
    if (Number.isFinite(v)) elementStrainMicro[el.gaugeId] = v;
  });
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
