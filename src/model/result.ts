import type { QualityFlag } from './quality.js';

/**
 * Result quantity names: the vocabulary shared by the database fields, the alarm rules and the
 * reports. Units are in the name. Strains are mechanical (stress-producing) strains.
 *
 * Voigt order everywhere: xx, yy, zz, yz, xz, xy (see src/mechanics/voigt.ts).
 * Plane groups report xx, yy, xy (and zz strain from the compliance); solid groups all six.
 * Uniaxial (single gauge) groups report `stress_axial_MPa` and `strain_axial_micro`.
 */
export const RESULT_QUANTITIES = [
  'strain_xx_micro', 'strain_yy_micro', 'strain_zz_micro', 'strain_yz_micro', 'strain_xz_micro', 'strain_xy_micro',
  'stress_xx_MPa', 'stress_yy_MPa', 'stress_zz_MPa', 'stress_yz_MPa', 'stress_xz_MPa', 'stress_xy_MPa',
  'strain_axial_micro', 'stress_axial_MPa',
  'principal_1_MPa', 'principal_2_MPa', 'principal_3_MPa',
  /** Plane groups: angle from the group's x axis to principal 1, degrees, counter-clockwise, in (-90, 90]. */
  'principal_angle_deg',
  /** Solid groups: unit direction of principal 1 in group axes (sign: largest component positive). */
  'principal_1_dir_x', 'principal_1_dir_y', 'principal_1_dir_z',
  /** Plane groups and single gauges: (principal_1 - principal_2) / 2, the largest shear in the gauged plane. */
  'max_shear_in_plane_MPa',
  /** Largest shear on any plane: (s_max - s_min) / 2 over all three principals, = tresca_MPa / 2 (surface groups: out-of-plane principal 0). */
  'max_shear_abs_MPa',
  'von_mises_MPa', 'tresca_MPa',
  'ratio_von_mises_to_yield', 'ratio_tension_to_tensile_strength', 'ratio_compression_to_compressive_strength',
  /** Redundant groups: root mean square of the element residuals, sqrt(sum r^2 / elements used), microstrain. */
  'residual_rms_micro',
  /** Redundant groups: standard error of the fit, sqrt(sum r^2 / (elements used - unknowns)), microstrain; residual_high compares it. */
  'fit_std_error_micro',
  'temperature_degC',
  'temperature_age_s',
] as const;

export type ResultQuantity = (typeof RESULT_QUANTITIES)[number];

/** One group's answer for one logger scan. */
export interface GroupResult {
  structureId: string;
  groupId: string;
  /** Zone of the structure the group sits in (routing key for alarms). */
  zone: string;
  loggerId: string;
  /** The logger's timestamp of the strain frame, epoch ms. */
  timeMs: number;
  seq: number | null;
  /** Finite values only; a quantity that does not apply to the group is absent. */
  values: Partial<Record<ResultQuantity, number>>;
  /** Per element: mechanical strain along the element after thermal correction, microstrain. */
  elementStrainMicro: Record<string, number>;
  /** Shared and frozen (see flagsFromBits): never mutate. */
  flags: readonly QualityFlag[];
}
