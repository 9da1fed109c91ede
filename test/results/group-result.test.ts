import { describe, expect, it } from 'vitest';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput, type GroupOutput } from '../../src/mechanics/group-model.js';
import { RESULT_FIELD_ORDER, toGroupResult } from '../../src/results/group-result.js';
import { VOIGT_ORDER } from '../../src/mechanics/voigt.js';
import { brannock } from '../simulators/support.js';

/** What each quantity is read from (the documented meaning of GroupOutput, written out apart from toGroupResult). */
function expectedValues(out: GroupOutput, ageS: number): Record<string, number> {
  const all: Array<[string, number]> = [];
  VOIGT_ORDER.forEach((c, i) => { all.push([`strain_${c}_micro`, out.strainMicro[i]], [`stress_${c}_MPa`, out.stressMPa[i]]); });
  all.push(['strain_axial_micro', out.axialStrainMicro], ['stress_axial_MPa', out.axialStressMPa]);
  out.principalMPa.forEach((v, i) => all.push([`principal_${i + 1}_MPa`, v]));
  all.push(['principal_angle_deg', out.principalAngleDeg]);
  ['x', 'y', 'z'].forEach((a, i) => all.push([`principal_1_dir_${a}`, out.principalDir1[i]]));
  all.push(['max_shear_in_plane_MPa', out.maxShearInPlaneMPa], ['max_shear_abs_MPa', out.maxShearAbsMPa], ['von_mises_MPa', out.vonMisesMPa],
    ['tresca_MPa', out.trescaMPa], ['ratio_von_mises_to_yield', out.ratioVonMisesToYield], ['ratio_tension_to_tensile_strength', out.ratioTensionToTensile],
    ['ratio_compression_to_compressive_strength', out.ratioCompressionToCompressive], ['residual_rms_micro', out.residualRmsMicro],
    ['fit_std_error_micro', out.fitStdErrorMicro], ['temperature_degC', out.temperatureC], ['temperature_age_s', ageS]);
  const single = Number.isFinite(out.axialStressMPa);
  return Object.fromEntries(all.filter(([k, v]) => Number.isFinite(v) && !(single && (k === 'strain_xx_micro' || k === 'stress_xx_MPa'))));
}

describe('toGroupResult', () => {
  it('keeps every finite quantity of every group of the example deck, under its name, in RESULT_FIELD_ORDER', async () => {
    const s = await brannock();
    const kinds = new Set<string>();
    for (const g of s.groups) {
      kinds.add(g.config.kind);
      const out = createGroupOutput(g.model.m);
      const raw = Float64Array.from(g.elementChannels, (_, i) => 120 + 37 * i);
      evaluateGroup(g.model, raw, 18.5, g.companion ? 95 : Number.NaN, out);
      const r = toGroupResult(s.structureId, g, out, 1_000, 7, 0, 2.5);
      const keys = Object.keys(r.values);
      expect(r.values, g.config.id).toEqual(expectedValues(out, 2.5));
      // The storage ring rebuilds results in this order; a line is the same bytes only if both agree.
      const places = keys.map((k) => RESULT_FIELD_ORDER.indexOf(k as never));
      expect(places.every((p, i) => p >= 0 && (i === 0 || p > places[i - 1])), `${g.config.id}: ${keys.join(' ')}`).toBe(true);
      for (const v of Object.values(r.values)) expect(Number.isFinite(v)).toBe(true);
    }
    // The deck has every kind of group: single gauges, plane rosettes, embedded solid clusters.
    expect([...kinds].sort()).toEqual(['plane_rosette', 'single', 'solid_cluster']);
  });

  it('leaves out a quantity that is not finite (a temperature age unknown)', async () => {
    const s = await brannock();
    const g = s.groups.find((x) => x.config.kind === 'plane_rosette')!;
    const out = createGroupOutput(g.model.m);
    evaluateGroup(g.model, Float64Array.from(g.elementChannels, () => 50), 20, Number.NaN, out);
    const r = toGroupResult(s.structureId, g, out, 1_000, null, 0, Number.NaN);
    expect('temperature_age_s' in r.values).toBe(false);
    expect(r.values.temperature_degC).toBe(20);
  });
});
