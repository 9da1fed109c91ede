import type { CompiledStructure } from '../config/compile.js';
import { evaluateGroup } from '../mechanics/evaluate-group.js';
import { createGroupOutput, type GroupOutput } from '../mechanics/group-model.js';

/** Everything the offline calculator shows for one sample of one group. */
export interface CalculationReport {
  structureId: string;
  groupId: string;
  kind: string;
  temperature_degC: number | null;
  elements: Array<{
    gauge: string; channel: string; raw: number | null; indicated_micro: number | null;
    apparent_thermal_micro: number | null; mechanical_micro: number | null; residual_micro: number | null;
  }>;
  /** Voigt order xx, yy, zz, yz, xz, xy; null where the group does not determine a component. */
  mechanical_strain_micro: Array<number | null>;
  stress_MPa: Array<number | null>;
  principal_MPa: Array<number | null>;
  principal_angle_deg: number | null;
  principal_1_direction: Array<number | null> | null;
  von_mises_MPa: number | null;
  tresca_MPa: number | null;
  max_shear_in_plane_MPa: number | null;
  max_shear_abs_MPa: number | null;
  residual_rms_micro: number | null;
  fit_std_error_micro: number | null;
  ratios: { von_mises_to_yield: number | null; tension_to_tensile_strength: number | null; compression_to_compressive_strength: number | null };
  flags: number;
}

export class UnknownGroupError extends Error {
  constructor(groupId: string, known: string[]) {
    super(`unknown group "${groupId}"; the configuration has: ${known.join(', ')}`);
    this.name = 'UnknownGroupError';
  }
}

export class MissingReadingError extends Error {
  constructor(missing: string[]) {
    super(`no reading given for ${missing.join(', ')} (give each element as gauge=value or channel=value; use null for a failed element)`);
    this.name = 'MissingReadingError';
  }
}

const num = (v: number): number | null => (Number.isFinite(v) ? v : null);

/**
 * Runs one sample through the same evaluator the pipeline uses. `readings` are keyed by gauge id
 * or channel id, in the element's signal unit; null marks a failed element.
 */
export function calculate(
  structure: CompiledStructure, groupId: string, readings: Record<string, number | null>, tempC: number | null,
  companionReading: number | null = null,
): { report: CalculationReport; output: GroupOutput } {
  const g = structure.groupsById.get(groupId);
  if (!g) throw new UnknownGroupError(groupId, [...structure.groupsById.keys()]);
  const m = g.model;
  const missing: string[] = [];
  const raw = Float64Array.from(m.elements, (el) => {
    const v = readings[el.gaugeId] !== undefined ? readings[el.gaugeId] : readings[el.channelId];
    if (v === undefined) missing.push(el.gaugeId);
    return v === null || v === undefined ? Number.NaN : v;
  });
  if (missing.length > 0) throw new MissingReadingError(missing);
  const out = createGroupOutput(m.m);
  evaluateGroup(m, raw, tempC ?? Number.NaN, companionReading ?? Number.NaN, out);
  const solid = g.config.kind === 'solid_cluster';
  const report: CalculationReport = {
    structureId: structure.structureId,
    groupId,
    kind: g.config.kind,
    temperature_degC: tempC,
    elements: m.elements.map((el, i) => ({
      gauge: el.gaugeId, channel: `${el.loggerId}/${el.channelId}`, raw: num(raw[i]),
      indicated_micro: num(out.elementIndicatedMicro[i]), apparent_thermal_micro: num(out.elementApparentMicro[i]),
      mechanical_micro: num(out.elementMechanicalMicro[i]),
      residual_micro: m.m > m.n && Number.isFinite(out.elementMechanicalMicro[i]) ? num(out.elementResidualMicro[i]) : null,
    })),
    mechanical_strain_micro: Array.from(out.strainMicro, num),
    stress_MPa: Array.from(out.stressMPa, num),
    principal_MPa: Array.from(out.principalMPa, num),
    principal_angle_deg: num(out.principalAngleDeg),
    principal_1_direction: solid ? Array.from(out.principalDir1, num) : null,
    von_mises_MPa: num(out.vonMisesMPa),
    tresca_MPa: num(out.trescaMPa),
    max_shear_in_plane_MPa: num(out.maxShearInPlaneMPa),
    max_shear_abs_MPa: num(out.maxShearAbsMPa),
    residual_rms_micro: num(out.residualRmsMicro),
    fit_std_error_micro: num(out.fitStdErrorMicro),
    ratios: {
      von_mises_to_yield: num(out.ratioVonMisesToYield),
      tension_to_tensile_strength: num(out.ratioTensionToTensile),
      compression_to_compressive_strength: num(out.ratioCompressionToCompressive),
    },
    flags: out.flags,
  };
  return { report, output: out };
}
