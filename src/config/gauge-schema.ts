import { z } from 'zod';
import { renamedTo } from './renamed.js';
import { IdSchema } from './material-schema.js';

/** Where a value comes from: a logger and one of its channels. */
export const ChannelRefSchema = z.strictObject({ logger: IdSchema, channel: z.string().min(1) });

const MicrostrainSignal = z.strictObject({
  /** The logger already reports strain (microstrain); only the zero reading is removed. */
  unit: z.literal('microstrain'),
});

const BridgeSignal = z.strictObject({
  /** Bridge output ratio in mV/V; converted with the Wheatstone-bridge equations. */
  unit: z.literal('mV/V'),
  gauge_factor: z.number().min(0.5).max(10),
  bridge: z.enum(['quarter', 'half', 'full']),
  /** Quarter bridge with lead_resistance_ohm: the gauge's resistance (350 when not given). */
  gauge_resistance_ohm: z.number().positive().optional(),
  /**
   * Quarter bridge only: lead resistance in series with the active arm (both wires of a 2-wire
   * quarter bridge); restored by the factor 1 + RL / Rg. Refused on half and full bridges.
   */
  lead_resistance_ohm: z.number().min(0).optional(),
  /** Fractional gauge-factor change per degC (e.g. 1e-4 = +1 % per 100 degC). */
  gauge_factor_temp_coeff_per_degC: z.number().min(-0.01).max(0.01).default(0),
  /** Temperature at which gauge_factor holds; defaults to the zero-reading temperature. */
  gauge_factor_ref_temperature_degC: z.number().optional(),
});

const VibratingWireSignal = z.strictObject({
  /** Resonant frequency in Hz, or "digits" = f^2 / 1000 (the trade's linear reading unit, common practice). */
  unit: z.enum(['Hz', 'digits']),
  /**
   * Microstrain per digit of the taut wire: 4 L^2 rho 1000 / E x 1e6 for wire length L (m),
   * density rho (kg/m3) and modulus E (Pa), since f = (1/2L) sqrt(sigma/rho) (src/mechanics/thermal.ts).
   */
  micro_per_digit: z.number().positive(),
  /** Correction of micro_per_digit from the gauge's own calibration (e.g. 1.012); 1 when none. */
  calibration_multiplier: z.number().positive().default(1),
  /** Expansion coefficient of the steel wire, 1/degC. */
  wire_alpha_per_degC: z.number().min(0).max(1e-4),
  /** Renamed: "gauge factor" is the resistance gauge's dR/R per strain; this is microstrain per digit. */
  gauge_factor: renamedTo('micro_per_digit', 'microstrain per digit of the taut wire'),
  batch_factor: renamedTo('calibration_multiplier', 'the correction from the gauge\'s own calibration'),
});

export const ThermalOutputSchema = z.strictObject({
  /** Polynomial coefficients c0, c1, ... of apparent strain (microstrain) versus temperature (degC). */
  coefficients_micro: z.array(z.number()).min(1).max(8),
  /** Expansion coefficient of the material the thermal output was characterised on, 1/degC. */
  characterised_on_alpha_per_degC: z.number().min(-1e-4).max(1e-4),
  /**
   * mV/V signals: gauge factor the curve was recorded with (default: the gauge's own). Each reading
   * shows the curve times this factor over the gauge factor at the reading's temperature.
   */
  gauge_factor: z.number().min(0.5).max(10).optional(),
});

export const GaugeSchema = z.strictObject({
  id: IdSchema,
  kind: z.enum(['bonded_foil', 'embedded_resistance', 'vibrating_wire']),
  description: z.string().optional(),
  channel: ChannelRefSchema,
  signal: z.discriminatedUnion('unit', [MicrostrainSignal, BridgeSignal, VibratingWireSignal]),
  /** Reading at installation, in the signal's unit (Hz for a Hz signal). */
  zero_reading: z.number(),
  zero_temperature_degC: z.number().min(-60).max(120),
  /** Transverse sensitivity coefficient Kt (fraction, e.g. 0.01 for 1 %). */
  transverse_sensitivity: z.number().min(-0.2).max(0.2).default(0),
  /** With transverse_sensitivity: Poisson ratio of the gauge-factor calibration beam; 0.285 when not given (the usual value, common practice). */
  transverse_calibration_nu: z.number().min(0).max(0.5).optional(),
  thermal_output: ThermalOutputSchema.optional(),
  /** Readings outside this range (signal unit) are treated as failed: open circuit, saturation. */
  valid_range: z.tuple([z.number(), z.number()]).optional(),
});
export type GaugeConfig = z.infer<typeof GaugeSchema>;

export const TemperatureSensorSchema = z.strictObject({
  id: IdSchema,
  kind: z.enum(['thermocouple', 'rtd']),
  description: z.string().optional(),
  channel: ChannelRefSchema,
  /** Added to every reading (calibration offset), degC. */
  offset_degC: z.number().default(0),
  valid_range_degC: z.tuple([z.number(), z.number()]).default([-50, 100]),
});
export type TemperatureSensorConfig = z.infer<typeof TemperatureSensorSchema>;
