import type { CompiledGroup, CompiledStructure } from '../src/config/compile.js';
import type { SignalUnit, Scenario } from './scenario.js';
import { sensorRole, type SensorRole } from './thermal-model.js';

/**
 * What each logger scans, worked out once from the compiled configuration: its channels (with
 * their signal unit, valid range and where the value comes from), its scan interval and the
 * groups it carries. Pure; allocates the plan.
 */
export type ChannelSource =
  | { kind: 'element'; groupIndex: number; element: number }
  | { kind: 'companion'; groupIndex: number }
  | { kind: 'temperature'; sensorId: string; role: SensorRole; offsetC: number }
  | { kind: 'unused' };

export interface ChannelPlan {
  id: string;
  gaugeId: string | null;
  unit: SignalUnit;
  validMin: number;
  validMax: number;
  source: ChannelSource;
}

export interface LoggerPlan {
  id: string;
  interval_ms: number;
  /** Offset of the first scan from the run start, ms: loggers are not in step. */
  phase_ms: number;
  channels: ChannelPlan[];
  /** Indices (into structure.groups) of the groups with an element or companion on this logger. */
  groupIndices: number[];
}

export interface RunPlan { loggers: LoggerPlan[] }

/** Builds the plan. Channels are in configuration order (gauges, then temperature sensors). */
export function buildPlan(structure: CompiledStructure, scn: Scenario): RunPlan {
  const c = structure.config;
  const where = new Map<string, ChannelSource>();
  structure.groups.forEach((g: CompiledGroup, gi) => {
    g.config.elements.forEach((e, k) => where.set(e.gauge, { kind: 'element', groupIndex: gi, element: k }));
    const compId = 'companion_gauge' in g.config ? g.config.companion_gauge : undefined;
    if (compId) where.set(compId, { kind: 'companion', groupIndex: gi });
  });
  const loggers: LoggerPlan[] = c.loggers.map((l, li) => {
    const channels: ChannelPlan[] = [];
    for (const gauge of c.gauges) {
      if (gauge.channel.logger !== l.id) continue;
      channels.push({
        id: gauge.channel.channel, gaugeId: gauge.id, unit: gauge.signal.unit as SignalUnit,
        validMin: gauge.valid_range ? gauge.valid_range[0] : -Infinity,
        validMax: gauge.valid_range ? gauge.valid_range[1] : Infinity,
        source: where.get(gauge.id) ?? { kind: 'unused' },
      });
    }
    for (const t of c.temperature_sensors) {
      if (t.channel.logger !== l.id) continue;
      channels.push({
        id: t.channel.channel, gaugeId: null, unit: 'degC', validMin: t.valid_range_degC[0], validMax: t.valid_range_degC[1],
        source: { kind: 'temperature', sensorId: t.id, role: sensorRole(t.id), offsetC: t.offset_degC },
      });
    }
    const groupIndices = [...new Set(channels.flatMap((ch) =>
      ch.source.kind === 'element' || ch.source.kind === 'companion' ? [ch.source.groupIndex] : []))].sort((a, b) => a - b);
    const interval_ms = (l.expected_interval_s * 1000) / scn.rate_factor;
    return { id: l.id, interval_ms, phase_ms: Math.min(interval_ms / 2, 7 * li), channels, groupIndices };
  });
  return { loggers };
}
