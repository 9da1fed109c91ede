import { FAULT_KINDS, parseScenario, type FaultKind, type FaultSpec, type Scenario } from './scenario.js';

/**
 * The standard Brannock Mere scenario: episodes and faults placed at fixed fractions of the run,
 * on gauges, channels and loggers of config/brannock-mere.yaml, so any duration shows all of them.
 */
export interface DefaultScenarioOptions {
  seed: number;
  start_ms: number;
  duration_s: number;
  day_s?: number;
  rate_factor?: number;
  /** Which faults to include (default: all kinds). */
  faults?: readonly FaultKind[];
  noise?: boolean;
  /** Traffic intensity, vehicles per minute (default 8). */
  vehicles_per_min?: number;
  /** When heavy vehicles enter the deck, s from the start (default: one at mid-run). */
  heavy_at_s?: readonly number[];
  /** When each kind of fault happens, s from the start (default: fixed fractions of the run, see defaultFaults). */
  fault_times?: FaultTimes;
}

/** A fault kind's window: start, and end for the kinds that end (drift and debonding go on to the end of the run). */
export type FaultTimes = Partial<Record<FaultKind, { start_s: number; end_s?: number }>>;

/** Fault specs of the standard scenario for a run of duration_s. */
export function defaultFaults(duration_s: number, kinds: readonly FaultKind[] = FAULT_KINDS, times: FaultTimes = {}): FaultSpec[] {
  const at = (f: number) => Math.round(duration_s * f * 1000) / 1000;
  const placed: FaultSpec[] = [
    { kind: 'debond', id: 'debond-rw-sp-c', gauge: 'rw-sp-c', start_s: at(0.15), drift_micro_per_h: 12 },
    { kind: 'dropout', id: 'dropout-span1-ch04', logger: 'lg-span1', channel: 'ch04', start_s: at(0.25), end_s: at(0.3) },
    { kind: 'spikes', id: 'spikes-pier-ch01', logger: 'lg-pier', channel: 'ch01', start_s: at(0.1), end_s: at(0.9), count: 8, magnitude: 0.25 },
    { kind: 'open_circuit', id: 'open-span1-ch02', logger: 'lg-span1', channel: 'ch02', start_s: at(0.55), end_s: at(0.6) },
    { kind: 'clock_drift', id: 'clock-slab', logger: 'lg-slab', start_s: at(0.4), drift_ppm: 20000 },
    { kind: 'silent', id: 'silent-thermal', logger: 'lg-thermal', start_s: at(0.7), end_s: at(0.78) },
  ];
  const all = placed.map((f): FaultSpec => {
    const t = times[f.kind];
    if (t === undefined) return f;
    if (!('end_s' in f)) return { ...f, start_s: t.start_s };
    const end_s = t.end_s ?? Math.min(duration_s, t.start_s + (f.end_s - f.start_s));
    if (end_s <= t.start_s) throw new RangeError(`fault ${f.kind}: end ${end_s} s is not after its start ${t.start_s} s`);
    return { ...f, start_s: t.start_s, end_s };
  });
  return all.filter((f) => kinds.includes(f.kind));
}

/**
 * The bearing seizes at 08:00 scenario time and frees at 15:00 (the morning warm-up, so the
 * restraint builds compression); a run that does not reach that window gets 10-40 % of its length.
 */
export function restraintWindow(start_ms: number, duration_s: number, day_s: number): { start_s: number; end_s: number } {
  const startHour = (((start_ms % 86_400_000) + 86_400_000) % 86_400_000) / 3_600_000;
  const start_s = ((((8 - startHour) % 24) + 24) % 24 / 24) * day_s;
  const end_s = start_s + (7 / 24) * day_s;
  if (end_s <= duration_s) return { start_s: Math.round(start_s * 1000) / 1000, end_s: Math.round(end_s * 1000) / 1000 };
  return { start_s: Math.round(duration_s * 0.1), end_s: Math.round(duration_s * 0.4) };
}

/** A complete scenario: daily cycle, traffic, heavy vehicles (default one at mid-run), a restraint episode (see restraintWindow), faults. */
export function defaultScenario(o: DefaultScenarioOptions): Scenario {
  const d = o.duration_s;
  return parseScenario({
    seed: o.seed,
    start_ms: o.start_ms,
    duration_s: d,
    day_s: o.day_s ?? 86400,
    rate_factor: o.rate_factor ?? 1,
    traffic: { vehicles_per_min: o.vehicles_per_min ?? 8 },
    heavy_vehicles: (o.heavy_at_s ?? [Math.round(d * 0.5)]).map((at_s) => ({ at_s, gross_kN: 1000 })),
    restraint: { ...restraintWindow(o.start_ms, d, o.day_s ?? 86400), fraction: 0.35 },
    faults: defaultFaults(d, o.faults ?? FAULT_KINDS, o.fault_times),
    noise: { enabled: o.noise ?? true },
  });
}
