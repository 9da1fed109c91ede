import { z } from 'zod';

/**
 * What a simulation run is: the scenario's knobs, all validated by zod. Times of episodes and
 * faults are seconds from the start of the run (logger time); slow processes (the daily
 * temperature cycle, the debonding drift) run on the compressed scenario clock set by `day_s`,
 * fast ones (vehicles crossing) on logger time, so a compressed day still shows real crossings.
 */
const Seconds = z.number().finite().nonnegative();

const faultCommon = { id: z.string().min(1), start_s: Seconds };

export const FaultSpecSchema = z.discriminatedUnion('kind', [
  /** A gauge slowly losing its bond: creeping error on that element, microstrain per scenario hour. */
  z.strictObject({ ...faultCommon, kind: z.literal('debond'), gauge: z.string().min(1), drift_micro_per_h: z.number().finite() }),
  /** A channel sending null (the logger could not read it). */
  z.strictObject({ ...faultCommon, kind: z.literal('dropout'), logger: z.string().min(1), channel: z.string().min(1), end_s: Seconds }),
  /** Isolated spikes of `magnitude` (channel unit) on `count` scans spread over the interval. */
  z.strictObject({
    ...faultCommon, kind: z.literal('spikes'), logger: z.string().min(1), channel: z.string().min(1), end_s: Seconds,
    count: z.number().int().positive(), magnitude: z.number().finite(),
  }),
  /** A broken lead: the channel reads far outside the gauge's valid range. */
  z.strictObject({ ...faultCommon, kind: z.literal('open_circuit'), logger: z.string().min(1), channel: z.string().min(1), end_s: Seconds }),
  /** The logger's clock runs off: its timestamps gain drift_ppm x elapsed time from start_s on. */
  z.strictObject({ ...faultCommon, kind: z.literal('clock_drift'), logger: z.string().min(1), drift_ppm: z.number().finite() }),
  /** The logger sends nothing. */
  z.strictObject({ ...faultCommon, kind: z.literal('silent'), logger: z.string().min(1), end_s: Seconds }),
]);
export type FaultSpec = z.infer<typeof FaultSpecSchema>;
export type FaultKind = FaultSpec['kind'];
export const FAULT_KINDS = ['debond', 'dropout', 'spikes', 'open_circuit', 'clock_drift', 'silent'] as const satisfies readonly FaultKind[];

/** Signal units of the configuration, each with its own noise and quantisation. */
const PerUnit = z.strictObject({
  microstrain: z.number().nonnegative(),
  'mV/V': z.number().nonnegative(),
  Hz: z.number().nonnegative(),
  digits: z.number().nonnegative(),
  degC: z.number().nonnegative(),
});
export type SignalUnit = keyof z.infer<typeof PerUnit>;

export const ScenarioSchema = z.strictObject({
  seed: z.number().int(),
  /** Start of the run, epoch ms (UTC); its hour of day starts the daily cycle. */
  start_ms: z.number().finite(),
  duration_s: z.number().finite().positive(),
  /** Logger seconds per 24 scenario hours (86400 = real time). */
  day_s: z.number().finite().positive().default(86400),
  /** Scan rates are the configuration's expected intervals divided by this. */
  rate_factor: z.number().finite().positive().default(1),
  /** Arrival time at the processor after the scan, ms. */
  latency_ms: z.number().finite().nonnegative().default(40),
  temperature: z.strictObject({
    mean_degC: z.number().finite().default(12),
    /** Half the day's air range. */
    amplitude_degC: z.number().finite().nonnegative().default(6),
  }).prefault({}),
  traffic: z.strictObject({
    vehicles_per_min: z.number().finite().nonnegative().default(8),
    truck_fraction: z.number().min(0).max(1).default(0.25),
  }).prefault({}),
  /** Rare heavy vehicles (abnormal load), gross weight kN, entering at at_s. */
  heavy_vehicles: z.array(z.strictObject({ at_s: Seconds, gross_kN: z.number().positive() })).default([]),
  /** A bearing that stops sliding: longitudinal restraint of the free expansion from start_s to end_s. */
  restraint: z.strictObject({ start_s: Seconds, end_s: Seconds, fraction: z.number().min(0).max(1).default(0.35) }).nullable().default(null),
  faults: z.array(FaultSpecSchema).default([]),
  noise: z.strictObject({
    enabled: z.boolean().default(true),
    /** Standard deviation of the Gaussian reading noise, per signal unit. */
    sigma: PerUnit.default({ microstrain: 0.8, 'mV/V': 0.0005, Hz: 0.02, digits: 0.03, degC: 0.05 }),
    /** Quantisation step of the logger, per signal unit (0 = none). */
    step: PerUnit.default({ microstrain: 0.1, 'mV/V': 0.0001, Hz: 0.001, digits: 0.01, degC: 0.01 }),
  }).prefault({}),
});
export type Scenario = z.infer<typeof ScenarioSchema>;
export type ScenarioInput = z.input<typeof ScenarioSchema>;

/** Parses a scenario; throws a ZodError naming every bad field. */
export function parseScenario(input: ScenarioInput): Scenario {
  return ScenarioSchema.parse(input);
}
