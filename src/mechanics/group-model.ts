import type { Reduction } from './reduction.js';

/**
 * Numeric form of a gauge group, built once from the configuration (src/config/compile.ts) and
 * read on every sample. Plain numbers and typed arrays only, one shape for every element kind, so
 * the per-sample loop stays monomorphic.
 */

/** How an element's raw reading becomes indicated strain. */
export const SIGNAL_MICROSTRAIN = 0;
export const SIGNAL_BRIDGE = 1;
export const SIGNAL_VW_HZ = 2;
export const SIGNAL_VW_DIGITS = 3;

export interface ElementModel {
  gaugeId: string;
  loggerId: string;
  channelId: string;
  signal: number;
  /** Zero reading in the raw unit (Hz readings are converted to digits before subtracting). */
  zero: number;
  /** Bridge: gauge factor at gfRefTempC, its coefficient per degC, arrangement code, lead factor. */
  gaugeFactor: number;
  gfTempCoeff: number;
  gfRefTempC: number;
  bridgeCode: number;
  leadFactor: number;
  /** Vibrating wire: microstrain per digit (micro_per_digit x calibration_multiplier). */
  vwMicroPerDigit: number;
  /** Thermal-output polynomial (microstrain vs degC) as recorded; empty = none. */
  thermalOutput: Float64Array;
  /**
   * Bridge elements: the gauge factor the curve was recorded with (the element's nominal one when
   * the file gives none); per sample the curve is rescaled by it over the gauge factor at the
   * temperature. 0: no rescaling (the logger reports microstrain itself).
   */
  thermalOutputGaugeFactor: number;
  /** The polynomial's value at the zero-reading temperature (it is referenced to it), microstrain. */
  thermalOutputAtZeroMicro: number;
  /**
   * Free expansion of the reference body the reading is relative to, projected on this element's
   * observation row, microstrain per degC: the material the thermal output was characterised on
   * (resistance gauges) or the wire (vibrating wire). Adding it turns a reading into total strain.
   */
  referenceExpansionMicroPerDegC: number;
  /** Host material's free expansion projected on the observation row, microstrain per degC. */
  hostExpansionMicroPerDegC: number;
  /** Sum of the row's normal components: projects an isotropic free strain (companion gauge). */
  rowNormalSum: number;
  validMin: number;
  validMax: number;
  /** Index of an earlier element of the group with the identical temperature model, or -1. */
  thermalTwin: number;
}

export const GROUP_PLANE = 0;
export const GROUP_SOLID = 1;
export const GROUP_UNIAXIAL = 2;

export interface GroupModel {
  id: string;
  kind: number;
  /** Elements (m) and unknowns (n: 3 plane xx, yy, xy; 6 solid; 1 uniaxial axial strain). */
  m: number;
  n: number;
  elements: ElementModel[];
  reduction: Reduction;
  /** n x n stiffness from mechanical strain (microstrain) to stress (MPa) after the 1e-6 scale: Q, C or [E_axis]. */
  stiffness: Float64Array;
  /** Plane groups: mechanical zz strain per unit in-plane stress (S31, S32, S36), 1/MPa. */
  zzCompliance: Float64Array;
  /** Host free expansion per degC in the group's axes (plane xx, yy, xy; solid 6; uniaxial x), engineering shear, 1/degC. */
  hostAlpha: Float64Array;
  zeroTempC: number;
  /** residual_high when the fit's standard error exceeds this, microstrain. */
  fitStdErrorLimitMicro: number;
  yieldMPa: number;
  tensileMPa: number;
  compressiveMPa: number;
  /** Unstressed companion gauge: its total strain is the free strain of the host. */
  companion: ElementModel | null;
}

/** Per-group scratch and output, allocated once per group and overwritten on every sample. */
export interface GroupOutput {
  /** Quality flag bits (src/model/quality.ts). */
  flags: number;
  temperatureC: number;
  /** Mechanical strain, Voigt 6-vector, microstrain; NaN where the group does not determine it. */
  strainMicro: Float64Array;
  /** Stress, Voigt 6-vector, MPa; NaN where not determined. */
  stressMPa: Float64Array;
  axialStrainMicro: number;
  axialStressMPa: number;
  /** Principal stresses (plane: in-plane s1, s2, NaN; solid: s1 >= s2 >= s3), MPa. */
  principalMPa: Float64Array;
  principalAngleDeg: number;
  /** Solid groups: direction of principal 1 (x, y, z); NaN otherwise. */
  principalDir1: Float64Array;
  vonMisesMPa: number;
  trescaMPa: number;
  /** Plane groups (and single gauges): (s1 - s2) / 2 of the in-plane principal stresses, MPa. */
  maxShearInPlaneMPa: number;
  /** Largest shear on any plane, Tresca / 2 = (s_max - s_min) / 2 of all three principals (0 out of plane for surface groups), MPa. */
  maxShearAbsMPa: number;
  /** Root mean square of the used elements' residuals, sqrt(sum r^2 / used), microstrain. */
  residualRmsMicro: number;
  /** Standard error of the fit, sqrt(sum r^2 / (used - unknowns)): an estimate of one element's noise, microstrain. */
  fitStdErrorMicro: number;
  ratioVonMisesToYield: number;
  ratioTensionToTensile: number;
  ratioCompressionToCompressive: number;
  /** Per element: indicated strain, apparent thermal strain, mechanical strain, residual (microstrain). */
  elementIndicatedMicro: Float64Array;
  elementApparentMicro: Float64Array;
  elementMechanicalMicro: Float64Array;
  elementResidualMicro: Float64Array;
  /**
   * Scratch; and the temperature-only terms per element (gaugeFactor, thermalMicro) with what they
   * were computed for (model, temperature, free strain), reused while those stay the same. Models
   * are not changed after compilation, so the model's identity names its constants.
   */
  work: {
    x: Float64Array; dirs: Float64Array; w9: Float64Array; gaugeFactor: Float64Array; thermalMicro: Float64Array;
    thermalFor: GroupModel | null; thermalT: number; thermalFree: number;
  };
}

export function createGroupOutput(m: number): GroupOutput {
  return {
    flags: 0,
    temperatureC: Number.NaN,
    strainMicro: new Float64Array(6),
    stressMPa: new Float64Array(6),
    axialStrainMicro: Number.NaN,
    axialStressMPa: Number.NaN,
    principalMPa: new Float64Array(3),
    principalAngleDeg: Number.NaN,
    principalDir1: new Float64Array(3),
    vonMisesMPa: Number.NaN,
    trescaMPa: Number.NaN,
    maxShearInPlaneMPa: Number.NaN,
    maxShearAbsMPa: Number.NaN,
    residualRmsMicro: Number.NaN,
    fitStdErrorMicro: Number.NaN,
    ratioVonMisesToYield: Number.NaN,
    ratioTensionToTensile: Number.NaN,
    ratioCompressionToCompressive: Number.NaN,
    elementIndicatedMicro: new Float64Array(m),
    elementApparentMicro: new Float64Array(m),
    elementMechanicalMicro: new Float64Array(m),
    elementResidualMicro: new Float64Array(m),
    work: {
      x: new Float64Array(6), dirs: new Float64Array(9), w9: new Float64Array(9),
      gaugeFactor: new Float64Array(m), thermalMicro: new Float64Array(m),
      thermalFor: null, thermalT: Number.NaN, thermalFree: Number.NaN,
    },
  };
}
