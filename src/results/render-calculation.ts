import { flagsFromBits } from '../model/quality.js';
import { VOIGT_ORDER } from '../mechanics/voigt.js';
import { CAUTION as SAFETY } from '../model/caution.js';
import type { CalculationReport } from './calculate.js';

const f = (v: number | null, digits = 3): string => (v === null ? '-' : v.toFixed(digits));

function table(header: string[], rows: string[][]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const line = (cells: string[]) => cells.map((c, i) => (i === 0 ? c.padEnd(widths[i]) : c.padStart(widths[i]))).join('  ');
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

/** Plain-text report of one calculation: every intermediate, units in the headings. */
export function renderCalculation(r: CalculationReport): string {
  const out: string[] = [];
  out.push(`strainward calculation - structure ${r.structureId}, group ${r.groupId} (${r.kind})`);
  out.push(`temperature: ${r.temperature_degC === null ? 'MISSING (no thermal correction applied)' : `${r.temperature_degC} degC`}`);
  out.push('');
  out.push(table(
    ['gauge', 'channel', 'raw', 'indicated (ue)', 'apparent thermal (ue)', 'mechanical (ue)', 'residual (ue)'],
    r.elements.map((e) => [e.gauge, e.channel, f(e.raw, 5), f(e.indicated_micro, 2), f(e.apparent_thermal_micro, 2), f(e.mechanical_micro, 2), f(e.residual_micro, 2)]),
  ));
  out.push('');
  out.push(table(['component', 'mechanical strain (ue)', 'stress (MPa)'],
    VOIGT_ORDER.map((c, i) => [c, f(r.mechanical_strain_micro[i], 2), f(r.stress_MPa[i], 3)])));
  out.push('(shear strains are engineering shear strains: gamma = 2 eps)');
  out.push('');
  out.push(`principal stresses (MPa): ${r.principal_MPa.filter((v) => v !== null).map((v) => f(v)).join(', ') || '-'}`);
  if (r.principal_angle_deg !== null) out.push(`principal angle (deg, from x to principal 1, counter-clockwise): ${f(r.principal_angle_deg, 2)}`);
  if (r.principal_1_direction) out.push(`principal 1 direction (x, y, z): ${r.principal_1_direction.map((v) => f(v, 4)).join(', ')}`);
  out.push(`von Mises (MPa): ${f(r.von_mises_MPa)}   Tresca (MPa): ${f(r.tresca_MPa)}`);
  out.push(`max shear in plane (MPa): ${f(r.max_shear_in_plane_MPa)}   max shear on any plane (MPa): ${f(r.max_shear_abs_MPa)}`);
  out.push(r.residual_rms_micro === null
    ? 'residual: - (no redundancy)'
    : `residual rms (ue): ${f(r.residual_rms_micro, 2)}   fit standard error (ue, compared with the limit): ${f(r.fit_std_error_micro, 2)}`);
  out.push(`ratios: von Mises / yield ${f(r.ratios.von_mises_to_yield, 4)}, tension / tensile strength ${f(r.ratios.tension_to_tensile_strength, 4)}, compression / compressive strength ${f(r.ratios.compression_to_compressive_strength, 4)}`);
  const flags = flagsFromBits(r.flags);
  out.push(`quality: ${flags.length === 0 ? 'good' : flags.join(', ')}`);
  out.push('');
  if (r.limits.length === 0) out.push('alarm limits: none configured for this group');
  else {
    out.push('alarm limits of this group (margin: room left before the limit, negative once past):');
    out.push(table(['rule', 'quantity', 'value', 'limit', 'level', 'margin', ''],
      r.limits.map((l) => [l.rule, l.quantity, f(l.value), `${l.direction === 'above' ? '>=' : '<='} ${f(l.limit)}`, l.level, f(l.margin),
        l.value === null ? 'not computed' : l.reached ? 'REACHED' : 'within'])));
  }
  out.push('');
  out.push(SAFETY);
  return out.join('\n');
}

export { SAFETY as SAFETY_NOTICE };
