import { BRIDGE_CODE, leadWireFactor } from '../mechanics/bridge.js';
import {
  SIGNAL_BRIDGE, SIGNAL_MICROSTRAIN, SIGNAL_VW_DIGITS, SIGNAL_VW_HZ, type ElementModel,
} from '../mechanics/group-model.js';
import { horner, vibratingWireDigits } from '../mechanics/thermal.js';
import type { GaugeConfig } from './gauge-schema.js';

/**
 * Builds one element's numeric model. `physicalRow` is its observation row in strain space
 * (plane 3 or solid 6 entries, transverse sensitivity folded in); `hostAlpha` the host's free
 * expansion per degC in that space, engineering shear included (a rotated orthotropic host has
 * shear terms), 1/degC.
 */
export function compileElement(gauge: GaugeConfig, physicalRow: Float64Array, hostAlpha: Float64Array): ElementModel {
  const normals = physicalRow.length === 3 ? 2 : 3;
  let rowNormalSum = 0;
  let hostExpansion = 0;
  for (let k = 0; k < normals; k++) rowNormalSum += physicalRow[k];
  for (let k = 0; k < physicalRow.length; k++) hostExpansion += physicalRow[k] * hostAlpha[k];
  const sig = gauge.signal;
  const el: ElementModel = {
    gaugeId: gauge.id,
    loggerId: gauge.channel.logger,
    channelId: gauge.channel.channel,
    signal: SIGNAL_MICROSTRAIN,
    zero: gauge.zero_reading,
    gaugeFactor: 0,
    gfTempCoeff: 0,
    gfRefTempC: gauge.zero_temperature_degC,
    bridgeCode: 0,
    leadFactor: 1,
    vwMicroPerDigit: 0,
    thermalOutput: new Float64Array(0),
    thermalOutputGaugeFactor: 0,
    thermalOutputAtZeroMicro: 0,
    // A self-compensated gauge with no published curve is taken as matched to its host:
    // its reading is then already mechanical strain.
    referenceExpansionMicroPerDegC: hostExpansion * 1e6,
    hostExpansionMicroPerDegC: hostExpansion * 1e6,
    rowNormalSum,
    validMin: gauge.valid_range ? gauge.valid_range[0] : -Infinity,
    validMax: gauge.valid_range ? gauge.valid_range[1] : Infinity,
    thermalTwin: -1,
  };
  if (sig.unit === 'mV/V') {
    el.signal = SIGNAL_BRIDGE;
    el.gaugeFactor = sig.gauge_factor;
    el.gfTempCoeff = sig.gauge_factor_temp_coeff_per_degC;
    el.gfRefTempC = sig.gauge_factor_ref_temperature_degC ?? gauge.zero_temperature_degC;
    el.bridgeCode = BRIDGE_CODE[sig.bridge];
    // Quarter bridge only (cross-check.ts refuses lead resistance on half and full bridges).
    el.leadFactor = sig.lead_resistance_ohm === undefined ? 1 : leadWireFactor(sig.lead_resistance_ohm, sig.gauge_resistance_ohm ?? 350);
  } else if (sig.unit === 'Hz' || sig.unit === 'digits') {
    el.signal = sig.unit === 'Hz' ? SIGNAL_VW_HZ : SIGNAL_VW_DIGITS;
    el.zero = sig.unit === 'Hz' ? vibratingWireDigits(gauge.zero_reading) : gauge.zero_reading;
    el.vwMicroPerDigit = sig.micro_per_digit * sig.calibration_multiplier;
    // The wire expands with the host: the reading is relative to the wire's own free length.
    el.referenceExpansionMicroPerDegC = sig.wire_alpha_per_degC * rowNormalSum * 1e6;
  }
  const to = gauge.thermal_output;
  // (cross-check.ts refuses a curve on a vibrating-wire gauge, and a curve gauge factor on a microstrain signal.)
  if (to !== undefined && el.signal !== SIGNAL_VW_HZ && el.signal !== SIGNAL_VW_DIGITS) {
    el.thermalOutput = Float64Array.from(to.coefficients_micro);
    // The curve was recorded with to.gauge_factor (or the gauge's own); each reading uses the factor at its temperature.
    if (sig.unit === 'mV/V') el.thermalOutputGaugeFactor = to.gauge_factor ?? sig.gauge_factor;
    el.thermalOutputAtZeroMicro = horner(el.thermalOutput, gauge.zero_temperature_degC);
    el.referenceExpansionMicroPerDegC = to.characterised_on_alpha_per_degC * rowNormalSum * 1e6;
  }
  return el;
}

/** True when two elements respond identically to temperature (same gauge batch, same row sums). */
export function sameTemperatureModel(a: ElementModel, b: ElementModel): boolean {
  return a.signal === b.signal && a.gaugeFactor === b.gaugeFactor && a.gfTempCoeff === b.gfTempCoeff
    && a.gfRefTempC === b.gfRefTempC && a.thermalOutputAtZeroMicro === b.thermalOutputAtZeroMicro
    && a.referenceExpansionMicroPerDegC === b.referenceExpansionMicroPerDegC
    && a.hostExpansionMicroPerDegC === b.hostExpansionMicroPerDegC && a.rowNormalSum === b.rowNormalSum
    && a.thermalOutputGaugeFactor === b.thermalOutputGaugeFactor && a.thermalOutput.length === b.thermalOutput.length && a.thermalOutput.every((c, k) => c === b.thermalOutput[k]);
}

/** Marks each element's thermal twin: the first earlier element with the same temperature model. */
export function linkThermalTwins(elements: ElementModel[]): void {
  elements.forEach((el, i) => {
    el.thermalTwin = elements.findIndex((other, j) => j < i && other.thermalTwin === -1 && sameTemperatureModel(el, other));
  });
}
