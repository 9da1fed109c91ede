import type { CompiledStructure } from '../src/config/compile.js';
import { formatTopic, compileTopicPattern } from '../src/ingest/topic.js';
import { buildFaultLog, isActive, type FaultLogEntry } from './faults.js';
import { buildPlan, type LoggerPlan, type RunPlan } from './plan.js';
import { streamRng, type Rng } from './prng.js';
import { cleanGroupReadings, concreteFreeStrainMicro, noisyReading, openCircuitReading } from './readings.js';
import type { FaultSpec, Scenario } from './scenario.js';
import { groupStress, placementOf, trueStress6, type Placement, type RestraintState } from './stress-model.js';
import { deckTemperatures, sensorRole, type DeckTemperatures } from './thermal-model.js';
import { generateTraffic, loadEffects, type LoadEffects, type Vehicle } from './traffic.js';

/** One line of the truth file: the true state of one group at one strain scan. */
export interface TruthLine {
  group: string;
  /** True scan time, epoch ms. */
  time_ms: number;
  /** The timestamp the logger put on the scan (differs under clock drift), epoch ms. */
  logger_ts_ms: number;
  /** Group space: plane [sx, sy, txy], solid Voigt 6, single [sigma], MPa. */
  stress_MPa: number[];
  /** Group temperature (mean of its sensors' true temperatures), degC. */
  temperature_degC: number;
  /** Ids of the faults touching this group at this scan. */
  faults: string[];
}

/** One logger scan as sent, with the truth behind it. */
export interface SimScan {
  structureId: string;
  loggerId: string;
  topic: string;
  trueMs: number;
  loggerMs: number;
  arrivalMs: number;
  seq: number;
  values: Record<string, number | null>;
  /** The MQTT payload (UTF-8 JSON of the scan message contract). */
  payload: string;
  truth: TruthLine[];
}

export interface Simulation {
  plan: RunPlan;
  faultLog: FaultLogEntry[];
  vehicles: Vehicle[];
  /** Every scan of the run in true-time order (ties: configuration order of loggers). Lazy. */
  scans(): Generator<SimScan>;
}

interface LoggerState { plan: LoggerPlan; k: number; rng: Rng; topic: string }

/** Sets up a run; pure (no I/O, no clock). Throws RangeError for faults naming unknown parts. */
export function createSimulation(structure: CompiledStructure, scn: Scenario): Simulation {
  const plan = buildPlan(structure, scn);
  const faultLog = buildFaultLog(structure, scn, plan);
  const vehicles = generateTraffic(scn, streamRng(scn.seed, 'traffic'));
  return { plan, faultLog, vehicles, scans: () => runScans(structure, scn, plan, faultLog, vehicles) };
}

function* runScans(structure: CompiledStructure, scn: Scenario, plan: RunPlan, log: FaultLogEntry[], vehicles: Vehicle[]): Generator<SimScan> {
  const pattern = compileTopicPattern();
  const endMs = scn.start_ms + scn.duration_s * 1000;
  const groups = structure.groups;
  const placements: Placement[] = groups.map((g) => placementOf(g.config.id));
  const materials = groups.map((g) => {
    const mat = structure.materials.get(g.config.material)!;
    return { E: 1 / mat.compliance[0], alpha: mat.alpha[0] };
  });
  const specById = new Map<string, FaultSpec>(scn.faults.map((f) => [f.id, f]));
  const r = scn.restraint;
  const seized = r ? deckTemperatures(scn, r.start_s) : null;
  const states: LoggerState[] = plan.loggers.map((p) => ({
    plan: p, k: 0, rng: streamRng(scn.seed, `noise:${p.id}`), topic: formatTopic(pattern, structure.structureId, p.id),
  }));
  const s6 = new Float64Array(6);
  const raw = groups.map((g) => new Float64Array(g.model.m));
  const companionRaw = new Float64Array(groups.length);
  const scanMs = (s: LoggerState) => scn.start_ms + Math.round(s.plan.phase_ms + s.k * s.plan.interval_ms);
  let cachedMs = Number.NaN;
  let temps: DeckTemperatures = deckTemperatures(scn, 0);
  let fx: LoadEffects = loadEffects(vehicles, 0);

  for (;;) {
    let next: LoggerState | null = null;
    for (const s of states) if (next === null || scanMs(s) < scanMs(next)) next = s;
    if (next === null || scanMs(next) >= endMs) return;
    const st = next;
    const trueMs = scanMs(st);
    const seq = st.k++;
    const active = log.filter((e) => isActive(e, trueMs));
    if (active.some((e) => e.kind === 'silent' && e.logger === st.plan.id)) continue;
    const t_s = (trueMs - scn.start_ms) / 1000;
    if (trueMs !== cachedMs) {
      temps = deckTemperatures(scn, t_s);
      fx = loadEffects(vehicles, t_s);
      cachedMs = trueMs;
    }
    const restraint: RestraintState = r && seized && t_s >= r.start_s && t_s < r.end_s
      ? { active: true, fraction: r.fraction, steelSeizeC: 0.5 * (seized.steelNorth + seized.steelSouth), slabSeizeC: 0.5 * (seized.slabTop + seized.slabBottom) }
      : { active: false, fraction: 0, steelSeizeC: 0, slabSeizeC: 0 };
    const loggerMs = trueMs + clockOffsetMs(active, specById, st.plan.id, trueMs);
    const truth: TruthLine[] = [];
    for (const gi of st.plan.groupIndices) {
      const g = groups[gi];
      const tempC = g.temperatures.length === 0 ? temps.air
        : g.temperatures.reduce((acc, t) => acc + temps[sensorRole(t.sensorId)], 0) / g.temperatures.length;
      const stress = groupStress(g, trueStress6(placements[gi], fx, temps, restraint, materials[gi].E, materials[gi].alpha, s6));
      const free = g.model.companion !== null
        ? concreteFreeStrainMicro(materials[gi].alpha, tempC, g.model.zeroTempC, t_s / scn.day_s) : Number.NaN;
      const extra = debondExtra(g.config.elements.map((e) => e.gauge), active, specById, t_s, scn.day_s);
      companionRaw[gi] = cleanGroupReadings(g, stress, tempC, free, raw[gi], extra);
      if (g.loggerId === st.plan.id) {
        truth.push({
          group: g.config.id, time_ms: trueMs, logger_ts_ms: loggerMs, stress_MPa: stress, temperature_degC: tempC,
          faults: active.filter((e) => e.groups.includes(g.config.id)).map((e) => e.id),
        });
      }
    }
    const values: Record<string, number | null> = {};
    for (const ch of st.plan.channels) {
      const src = ch.source;
      const v = src.kind === 'element' ? raw[src.groupIndex][src.element]
        : src.kind === 'companion' ? companionRaw[src.groupIndex]
          : src.kind === 'temperature' ? temps[src.role] - src.offsetC : 0;
      let value: number | null = noisyReading(v, ch.unit, scn, st.rng);
      for (const e of active) {
        if (e.logger !== st.plan.id || e.channel !== ch.id) continue;
        if (e.kind === 'dropout') value = null;
        else if (e.kind === 'open_circuit') value = openCircuitReading(ch.validMin, ch.validMax);
        else if (e.kind === 'spikes' && value !== null) {
          value += (specById.get(e.id) as Extract<FaultSpec, { kind: 'spikes' }>).magnitude;
        }
      }
      values[ch.id] = value;
    }
    // `synthetic`: the processor warns about simulated readings (once per logger) and lists them in its presence.
    const payload = JSON.stringify({ ts: loggerMs, seq, values, synthetic: true });
    yield { structureId: structure.structureId, loggerId: st.plan.id, topic: st.topic, trueMs, loggerMs, arrivalMs: trueMs + scn.latency_ms, seq, values, payload, truth };
  }
}

/** Logger clock error at true time t_ms, ms (integer). */
function clockOffsetMs(active: FaultLogEntry[], specs: Map<string, FaultSpec>, loggerId: string, t_ms: number): number {
  let off = 0;
  for (const e of active) {
    if (e.kind !== 'clock_drift' || e.logger !== loggerId) continue;
    const spec = specs.get(e.id) as Extract<FaultSpec, { kind: 'clock_drift' }>;
    off += spec.drift_ppm * 1e-6 * (t_ms - e.start_ms);
  }
  return Math.round(off);
}

/** Debonding error per element (microstrain), or undefined when no element of the group is debonding. */
function debondExtra(gauges: string[], active: FaultLogEntry[], specs: Map<string, FaultSpec>, t_s: number, day_s: number): number[] | undefined {
  let extra: number[] | undefined;
  for (const e of active) {
    if (e.kind !== 'debond') continue;
    const i = gauges.indexOf(e.gauge ?? '');
    if (i < 0) continue;
    const spec = specs.get(e.id) as Extract<FaultSpec, { kind: 'debond' }>;
    extra ??= gauges.map(() => 0);
    extra[i] += (spec.drift_micro_per_h * (t_s - spec.start_s) * 24) / day_s;
  }
  return extra;
}
