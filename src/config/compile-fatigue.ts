import type { FatigueDetailParams } from '../fatigue/detail.js';
import { DIRECT_STRESS_CATEGORIES_MPA, SHEAR_STRESS_CATEGORIES_MPA, snCurve } from '../fatigue/sn-curve.js';
import type { ValidationProblem } from '../validation/issues.js';
import type { FatigueConfig } from './fatigue-schema.js';
import type { StructureConfig } from './structure-schema.js';

/**
 * How a detail's stress comes from a result: s = a xx + b yy + c xy over the group's plane stresses
 * (direction and shear), a principal, or the single gauge's axial stress.
 */
export type FatigueStressReader =
  | { kind: 'plane'; a: number; b: number; c: number }
  | { kind: 'principal'; quantity: 'principal_1_MPa' | 'principal_2_MPa' }
  | { kind: 'axial'; factor: number };

export interface CompiledFatigueDetail {
  id: string;
  groupId: string;
  reader: FatigueStressReader;
  params: FatigueDetailParams;
  /** Where it is: the detail's `location`, else its group's. */
  location: string;
  /** For reports: what is counted, in words. */
  describe: string;
}

export interface CompiledFatigue {
  details: CompiledFatigueDetail[];
  writeIntervalMs: number;
}

const CHECKPOINTS = 24;

/** Compiles the `fatigue` section once; every problem at once, each naming its field. Pure. */
export function compileFatigue(c: StructureConfig, f: FatigueConfig): { fatigue: CompiledFatigue | null; problems: ValidationProblem[] } {
  const problems: ValidationProblem[] = [];
  const groups = new Map(c.groups.map((g) => [g.id, g]));
  const ids = new Set<string>();
  const details: CompiledFatigueDetail[] = [];
  const rateWindowMs = f.rate_window_h * 3_600_000;
  f.details.forEach((d, i) => {
    const at = `fatigue.details[${i}]`;
    if (ids.has(d.id)) problems.push({ path: `${at}.id`, reason: `detail id "${d.id}" is used twice` });
    ids.add(d.id);
    let groupId = d.group;
    if ((d.group === undefined) === (d.gauge === undefined)) {
      problems.push({ path: at, reason: 'name either `group` or `gauge` (exactly one): where the stress is measured' });
      return;
    }
    if (d.gauge !== undefined) {
      groupId = c.groups.find((g) => g.kind === 'single' && g.elements[0].gauge === d.gauge)?.id;
      if (groupId === undefined) { problems.push({ path: `${at}.gauge`, reason: `no single-gauge group reads gauge "${d.gauge}": only such a group gives a stress from one gauge` }); return; }
    }
    const g = groups.get(groupId!);
    if (g === undefined) { problems.push({ path: `${at}.group`, reason: `unknown group "${groupId}"` }); return; }
    const shear = d.stress.kind === 'shear';
    const cats: readonly number[] = shear ? SHEAR_STRESS_CATEGORIES_MPA : DIRECT_STRESS_CATEGORIES_MPA;
    if (!cats.includes(d.category_MPa)) {
      problems.push({ path: `${at}.category_MPa`, reason: `${d.category_MPa} is not an EN 1993-1-9 ${shear ? 'shear' : 'direct stress'} detail category (${cats.join(', ')})` });
      return;
    }
    let reader: FatigueStressReader;
    const s = d.stress;
    if (g.kind === 'solid_cluster') { problems.push({ path: `${at}.group`, reason: `group "${g.id}" is a solid cluster: fatigue details are for steel surfaces (plane rosettes or single gauges)` }); return; }
    if (g.kind === 'single') {
      if (s.kind !== 'direction' || s.angle_deg % 180 !== 0) { problems.push({ path: `${at}.stress`, reason: `group "${g.id}" is a single gauge: only the stress along it is known (kind direction, angle_deg 0)` }); return; }
      reader = { kind: 'axial', factor: 1 };
    } else if (s.kind === 'principal') {
      reader = { kind: 'principal', quantity: s.which === 1 ? 'principal_1_MPa' : 'principal_2_MPa' };
    } else {
      const t = (s.angle_deg * Math.PI) / 180;
      const co = Math.cos(t); const si = Math.sin(t);
      // sigma_n = xx c^2 + yy s^2 + 2 xy s c; tau = (yy - xx) s c + xy (c^2 - s^2) (plane stress transformation, common practice).
      reader = s.kind === 'direction' ? { kind: 'plane', a: co * co, b: si * si, c: 2 * si * co } : { kind: 'plane', a: -si * co, b: si * co, c: co * co - si * si };
    }
    details.push({
      id: d.id, groupId: g.id, reader, location: d.location ?? g.location,
      describe: `${s.kind === 'principal' ? `principal ${s.which}` : `${s.kind} stress at ${s.angle_deg} deg`} of group ${g.id}, category ${d.category_MPa}, gamma_Ff ${d.gamma_Ff}, gamma_Mf ${d.gamma_Mf}, SCF ${d.stress_concentration_factor}`,
      params: {
        curve: snCurve(shear ? 'shear' : 'direct', d.category_MPa, d.gamma_Ff, d.gamma_Mf),
        scf: d.stress_concentration_factor, gateMPa: d.gate_MPa, binWidthMPa: d.histogram.bin_width_MPa, bins: d.histogram.bins,
        gapMs: f.gap_s * 1000, checkpointMs: rateWindowMs / CHECKPOINTS, checkpoints: CHECKPOINTS,
      },
    });
  });
  return { fatigue: problems.length === 0 ? { details, writeIntervalMs: f.write_interval_s * 1000 } : null, problems };
}
