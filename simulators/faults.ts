import type { CompiledStructure } from '../src/config/compile.js';
import type { RunPlan } from './plan.js';
import { streamRng } from './prng.js';
import type { FaultSpec, Scenario } from './scenario.js';

/**
 * The fault log: which fault is active when and on what, and which instrument-health alarm it
 * should raise (names of the health checks in src/alarms/schema-health.ts), so a test knows what
 * to expect. Built before the run from the scenario alone (spike instants included). Pure.
 */
export interface FaultLogEntry {
  id: string;
  kind: FaultSpec['kind'];
  logger: string;
  channel: string | null;
  gauge: string | null;
  /** Groups whose results the fault touches. */
  groups: string[];
  /** Epoch ms (true time); end null = to the end of the run. */
  start_ms: number;
  end_ms: number | null;
  expected_health: string[];
  /** Spikes: true times of the scans that carry one, epoch ms. */
  spike_times_ms?: number[];
  note: string;
}

/** Which logger and channel read a gauge. */
function gaugeChannel(structure: CompiledStructure, gaugeId: string): { logger: string; channel: string } {
  const g = structure.config.gauges.find((x) => x.id === gaugeId);
  if (!g) throw new RangeError(`fault names gauge "${gaugeId}", which the configuration does not have`);
  return { logger: g.channel.logger, channel: g.channel.channel };
}

/** Groups reading a channel: as an element, as companion, or through a temperature sensor on it. */
export function groupsOfChannel(structure: CompiledStructure, logger: string, channel: string | null): string[] {
  return structure.groups.filter((g) => {
    const onElements = g.loggerId === logger && (channel === null || g.elementChannels.includes(channel));
    const onCompanion = g.companion !== null && g.companion.loggerId === logger && (channel === null || g.companion.channelId === channel);
    const onTemp = g.temperatures.some((t) => t.loggerId === logger && (channel === null || t.channelId === channel));
    return onElements || onCompanion || onTemp;
  }).map((g) => g.config.id);
}

/** Builds the log; throws RangeError for a fault naming an unknown gauge, logger or channel. */
export function buildFaultLog(structure: CompiledStructure, scn: Scenario, plan: RunPlan): FaultLogEntry[] {
  const ms = (s: number) => scn.start_ms + Math.round(s * 1000);
  return scn.faults.map((f): FaultLogEntry => {
    if (f.kind === 'debond') {
      const { logger, channel } = gaugeChannel(structure, f.gauge);
      const group = structure.groups.find((g) => g.config.elements.some((e) => e.gauge === f.gauge));
      const redundant = group !== undefined && group.model.m > group.model.n;
      return {
        id: f.id, kind: f.kind, logger, channel, gauge: f.gauge, groups: group ? [group.config.id] : [],
        start_ms: ms(f.start_s), end_ms: null, expected_health: redundant ? ['residual_high'] : [],
        note: redundant ? 'creeping error on one element of a redundant group: the residual grows'
          : 'creeping error on a non-redundant group: no health check can see it; the stress drifts',
      };
    }
    const loggerPlan = plan.loggers.find((l) => l.id === f.logger);
    if (!loggerPlan) throw new RangeError(`fault "${f.id}" names logger "${f.logger}", which the configuration does not have`);
    if (f.kind === 'clock_drift') {
      return {
        id: f.id, kind: f.kind, logger: f.logger, channel: null, gauge: null, groups: groupsOfChannel(structure, f.logger, null),
        start_ms: ms(f.start_s), end_ms: null, expected_health: [],
        note: `logger timestamps gain ${f.drift_ppm} ppm of elapsed time; arrival times stay true`,
      };
    }
    if (f.kind === 'silent') {
      const groups = groupsOfChannel(structure, f.logger, null);
      const feedsTemperature = loggerPlan.channels.some((c) => c.source.kind === 'temperature');
      return {
        id: f.id, kind: f.kind, logger: f.logger, channel: null, gauge: null, groups,
        start_ms: ms(f.start_s), end_ms: ms(f.end_s),
        expected_health: feedsTemperature ? ['no_data', 'temperature_stale'] : ['no_data'],
        note: 'the logger sends nothing',
      };
    }
    const ch = loggerPlan.channels.find((c) => c.id === f.channel);
    if (!ch) throw new RangeError(`fault "${f.id}" names channel "${f.logger}/${f.channel}", which the configuration does not have`);
    const base = {
      id: f.id, kind: f.kind, logger: f.logger, channel: f.channel, gauge: ch.gaugeId,
      groups: groupsOfChannel(structure, f.logger, f.channel), start_ms: ms(f.start_s), end_ms: ms(f.end_s),
    };
    const isTemp = ch.source.kind === 'temperature';
    if (f.kind === 'dropout') {
      return { ...base, expected_health: ['channel_missing', isTemp ? 'temperature_stale' : 'result_incomplete'], note: 'the channel reads null' };
    }
    if (f.kind === 'open_circuit') {
      return { ...base, expected_health: ['out_of_range', isTemp ? 'temperature_stale' : 'result_incomplete'], note: 'reading far outside the valid range' };
    }
    return { ...base, expected_health: ['spike'], spike_times_ms: spikeScanTimes(scn, loggerPlan.interval_ms, loggerPlan.phase_ms, f), note: `isolated spikes of ${f.magnitude} (channel unit)` };
  });
}

/** True times (epoch ms) of the scans that carry a spike: random instants snapped to the next scan. */
function spikeScanTimes(scn: Scenario, interval_ms: number, phase_ms: number, f: Extract<FaultSpec, { kind: 'spikes' }>): number[] {
  const rng = streamRng(scn.seed, `spikes:${f.id}`);
  const out = new Set<number>();
  for (let k = 0; k < f.count; k++) {
    const t_ms = (f.start_s + (f.end_s - f.start_s) * rng.uniform()) * 1000;
    const scan = Math.ceil((t_ms - phase_ms) / interval_ms);
    out.add(scn.start_ms + Math.round(phase_ms + scan * interval_ms));
  }
  return [...out].sort((a, b) => a - b);
}

/** True when the entry is active at true time t_ms. */
export function isActive(e: FaultLogEntry, t_ms: number): boolean {
  if (e.spike_times_ms) return e.spike_times_ms.includes(t_ms);
  return t_ms >= e.start_ms && (e.end_ms === null || t_ms < e.end_ms);
}
