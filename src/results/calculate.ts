import type { CompiledStructure } from '../config/compile.js';
import { evaluateGroup } from '../mechanics/evaluate-group.js';
import { createGroupOutput, type GroupOutput } from '../mechanics/group-model.js';
import { didYouMean } from '../validation/nearest.js';
import { toGroupResult } from './group-result.js';
import { limitStandings, type LimitStanding } from './limit-check.js';

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
  /** Every threshold of the limit rules whose scope includes the group, against this sample. */
  limits: LimitStanding[];
}

export class UnknownGroupError extends Error {
  constructor(groupId: string, known: string[]) {
    super(`unknown group "${groupId}"${didYouMean(groupId, known)}; the configuration has: ${known.join(', ')}`);
    this.name = 'UnknownGroupError';
  }
}

export class MissingReadingError extends Error {
  constructor(missing: string[]) {
    super(`no reading given for ${missing.join(', ')} (give each element as gauge=value, channel=value or logger/channel=value; use null for a failed element)`);
    this.name = 'MissingReadingError';
  }
}

/** A reading keyed by something that is not an element of the group (it would be silently unused), or one element given twice. */
export class UnknownReadingError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UnknownReadingError';
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
  // Each element answers to its gauge id, its channel id and the `logger/channel` the report prints.
  const keysOf = (el: (typeof m.elements)[number]) => [el.gaugeId, el.channelId, `${el.loggerId}/${el.channelId}`];
  const accepted = new Set(m.elements.flatMap(keysOf));
  const unknown = Object.keys(readings).filter((k) => !accepted.has(k));
  if (unknown.length > 0) {
    const reads = m.elements.map((el) => `${el.gaugeId} (${el.loggerId}/${el.channelId})`).join(', ');
    throw new UnknownReadingError(`${unknown.map((k) => `"${k}"${didYouMean(k, accepted)}`).join(', ')}: not an element of group "${groupId}", which reads ${reads}`);
  }
  const missing: string[] = [];
  const raw = Float64Array.from(m.elements, (el) => {
    const given = keysOf(el).filter((k) => readings[k] !== undefined);
    if (given.length > 1) throw new UnknownReadingError(`${given.map((k) => `"${k}"`).join(' and ')} are the same element (${el.gaugeId}): give it once`);
    const v = given.length === 1 ? readings[given[0]] : undefined;
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
    limits: limitStandings(structure.alarms, { id: groupId, zone: g.config.zone },
      toGroupResult(structure.structureId, g, out, 0, null, 0, Number.NaN).values),
  };
  return { report, output: out };
}
