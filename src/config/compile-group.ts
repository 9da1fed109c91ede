import {
  GROUP_PLANE, GROUP_SOLID, GROUP_UNIAXIAL, type ElementModel, type GroupModel,
} from '../mechanics/group-model.js';
import { buildReduction } from '../mechanics/reduction.js';
import { rotateCompliance, rotateStrainVector, rotationAboutZ, rotationFromAngles, type Rotation3 } from '../mechanics/rotation.js';
import { invertSquare, planeStressCompliance } from '../mechanics/stiffness.js';
import { normalStrainRow2, normalStrainRow3, ZZ, XX, YY, XY } from '../mechanics/voigt.js';
import type { MaterialModel } from './compile-material.js';
import { compileElement, linkThermalTwins } from './compile-element.js';
import type { GaugeConfig } from './gauge-schema.js';
import type { GroupConfig } from './group-schema.js';

const DEG = Math.PI / 180;

/** Poisson ratio of the gauge-factor calibration beam when the file gives none (the usual 0.285, common practice). */
export const DEFAULT_CALIBRATION_NU = 0.285;
/** residual_high limit on the fit's standard error when the group gives none, microstrain. */
export const DEFAULT_FIT_STD_ERROR_LIMIT_MICRO = 30;

const calibrationNu = (g: GaugeConfig) => g.transverse_calibration_nu ?? DEFAULT_CALIBRATION_NU;

/**
 * In-plane observation row of a gauge at angle theta with transverse sensitivity kt, calibrated on a
 * beam of Poisson ratio nu0: reading = (eps_axial + kt eps_transverse) / (1 - nu0 kt).
 */
export function planeObservationRow(thetaDeg: number, kt: number, nu0: number): Float64Array {
  const a = normalStrainRow2(thetaDeg * DEG, new Float64Array(3));
  const t = normalStrainRow2((thetaDeg + 90) * DEG, new Float64Array(3));
  const k = 1 / (1 - nu0 * kt);
  return a.map((v, i) => (v + kt * t[i]) * k);
}

/** 3D observation row for unit direction n and (when kt != 0) the unit transverse direction t. */
export function solidObservationRow(n: readonly number[], t: readonly number[] | undefined, kt: number, nu0: number): Float64Array {
  const a = normalStrainRow3(n[0], n[1], n[2], new Float64Array(6));
  if (kt === 0 || t === undefined) return a;
  const tr = normalStrainRow3(t[0], t[1], t[2], new Float64Array(6));
  const k = 1 / (1 - nu0 * kt);
  return a.map((v, i) => (v + kt * tr[i]) * k);
}

export function unit(v: readonly number[]): number[] {
  const len = Math.hypot(v[0], v[1], v[2]);
  return [v[0] / len, v[1] / len, v[2] / len];
}

/**
 * Builds a group's numeric model. Gauges and material are already resolved and cross-checked;
 * returns null when the elements cannot determine the group's strain state.
 */
export function compileGroup(
  group: GroupConfig, gauges: GaugeConfig[], companion: GaugeConfig | null, material: MaterialModel,
): GroupModel | null {
  // Material properties in the group's axes: rotated once here, never per sample.
  const r = materialRotation(group);
  const s6 = r === null ? material.compliance : rotateCompliance(material.compliance, r);
  const solidAlpha = r === null ? material.alpha : rotateStrainVector(material.alpha, r);
  const sp = planeStressCompliance(s6);
  // In-plane expansion xx, yy, xy (engineering shear: non-zero for a rotated orthotropic material).
  const planeAlpha = Float64Array.of(solidAlpha[XX], solidAlpha[YY], solidAlpha[XY]);
  const elements: ElementModel[] = [];
  const m = gauges.length;
  let n: number;
  let kind: number;
  let obs: Float64Array;
  let stiffness: Float64Array;
  let hostAlpha: Float64Array;
  if (group.kind === 'solid_cluster') {
    kind = GROUP_SOLID;
    n = 6;
    obs = new Float64Array(m * n);
    group.elements.forEach((e, i) => {
      const g = gauges[i];
      const t = e.transverse_direction ? unit(e.transverse_direction) : undefined;
      const row = solidObservationRow(unit(e.direction), t, g.transverse_sensitivity, calibrationNu(g));
      obs.set(row, i * n);
      elements.push(compileElement(g, row, solidAlpha));
    });
    stiffness = invertSquare(s6, 6);
    hostAlpha = solidAlpha;
  } else {
    const rows = group.elements.map((e, i) =>
      planeObservationRow('angle_deg' in e ? e.angle_deg : 0, gauges[i].transverse_sensitivity, calibrationNu(gauges[i])));
    rows.forEach((row, i) => elements.push(compileElement(gauges[i], row, planeAlpha)));
    if (group.kind === 'plane_rosette') {
      kind = GROUP_PLANE;
      n = 3;
      obs = new Float64Array(m * n);
      rows.forEach((row, i) => obs.set(row, i * n));
      stiffness = invertSquare(sp, 3);
      hostAlpha = planeAlpha;
    } else {
      // Uniaxial stress sigma along x: plane strain state = sigma (S11, S21, S61), so with the axial
      // strain as the unknown the state is axial * (1, S21/S11, S61/S11).
      kind = GROUP_UNIAXIAL;
      n = 1;
      const b = [1, sp[3] / sp[0], sp[6] / sp[0]];
      obs = Float64Array.from(rows, (row) => row[0] * b[0] + row[1] * b[1] + row[2] * b[2]);
      stiffness = Float64Array.of(1 / sp[0]);
      // Free expansion along the gauge axis x.
      hostAlpha = planeAlpha.subarray(0, 1);
    }
  }
  linkThermalTwins(elements);
  const reduction = buildReduction(obs, m, n);
  if (reduction.byMissingMask.get(0) === null) return null;
  const zero = gauges[0].zero_temperature_degC;
  return {
    id: group.id,
    kind,
    m,
    n,
    elements,
    reduction,
    stiffness,
    zzCompliance: Float64Array.of(s6[ZZ * 6 + XX], s6[ZZ * 6 + YY], s6[ZZ * 6 + XY]),
    hostAlpha,
    zeroTempC: zero,
    fitStdErrorLimitMicro: group.fit_std_error_limit_micro ?? DEFAULT_FIT_STD_ERROR_LIMIT_MICRO,
    yieldMPa: material.yieldMPa,
    tensileMPa: material.tensileMPa,
    compressiveMPa: material.compressiveMPa,
    companion: companion ? compileCompanion(companion, solidAlpha) : null,
  };
}

/**
 * The companion sits unstressed in the same material: the free strain is the same in every
 * direction, so it sees it along its axis AND across its grid. Its row (ASTM E251 definition of Kt:
 * indicated = (eps_a + Kt eps_t) / (1 - nu0 Kt)) sums to (1 + Kt) / (1 - nu0 Kt) on the normal
 * components; the evaluator divides its total strain by that sum to recover the free strain.
 * Which in-grid direction is taken does not matter for an isotropic free strain.
 */
function compileCompanion(gauge: GaugeConfig, solidAlpha: Float64Array): ElementModel {
  const row = solidObservationRow([1, 0, 0], [0, 1, 0], gauge.transverse_sensitivity, calibrationNu(gauge));
  return compileElement(gauge, row, solidAlpha);
}

/** The group's material orientation as a rotation from group to material axes, or null when none is given. */
export function materialRotation(group: GroupConfig): Rotation3 | null {
  if (group.kind === 'solid_cluster') {
    const m = group.material_rotation_deg;
    return m === undefined ? null : rotationFromAngles(m.about_z * DEG, m.about_y * DEG, m.about_x * DEG);
  }
  return group.material_angle_deg === undefined ? null : rotationAboutZ(group.material_angle_deg * DEG);
}
