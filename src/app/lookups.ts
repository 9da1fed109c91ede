import type { AlarmLookups, ChannelInfo, GroupInfo, LoggerInfo } from '../alarms/types.js';
import type { CompiledStructure } from '../config/compile.js';

/** Zone of a logger that reads no gauge of any group (e.g. a thermocouple scanner). */
export const STRUCTURE_ZONE = 'structure';

/**
 * What the alarm engine needs to know of a compiled structure: zone and location of every group,
 * and per logger its zone, location, expected interval and channels with their valid ranges. Pure;
 * builds new maps and mutates nothing.
 *
 * - A logger's zone is the zone of the groups whose gauges it reads (elements or companion); when
 *   those lie in several zones, the zone of its first such gauge in file order; 'structure' when it reads none.
 * - A gauge channel's range is its `valid_range` in the signal's unit (unbounded when absent).
 * - A temperature channel's range is `valid_range_degC` less the calibration offset: the engine
 *   checks the raw reading, the pipeline checks reading + offset, and both must agree.
 */
export function alarmLookups(structure: CompiledStructure): AlarmLookups {
  const c = structure.config;
  const groups = new Map<string, GroupInfo>(c.groups.map((g) => [g.id, { zone: g.zone, location: g.location }]));
  const groupOfGauge = new Map<string, { id: string; zone: string; location: string }>();
  for (const g of c.groups) {
    const members = g.elements.map((e) => e.gauge);
    if ('companion_gauge' in g && g.companion_gauge !== undefined) members.push(g.companion_gauge);
    for (const gaugeId of members) groupOfGauge.set(gaugeId, { id: g.id, zone: g.zone, location: g.location });
  }

  const channels = new Map<string, Map<string, ChannelInfo>>(c.loggers.map((l) => [l.id, new Map()]));
  const zonesOfLogger = new Map<string, string[]>(c.loggers.map((l) => [l.id, []]));
  for (const gauge of c.gauges) {
    const group = groupOfGauge.get(gauge.id);
    const where = gauge.description ?? `gauge ${gauge.id}`;
    channels.get(gauge.channel.logger)?.set(gauge.channel.channel, {
      groupId: group?.id ?? null,
      location: group === undefined ? where : `${where}, ${group.location}`,
      validMin: gauge.valid_range?.[0] ?? Number.NEGATIVE_INFINITY,
      validMax: gauge.valid_range?.[1] ?? Number.POSITIVE_INFINITY,
      unit: gauge.signal.unit,
    });
    if (group !== undefined) zonesOfLogger.get(gauge.channel.logger)?.push(group.zone);
  }
  for (const t of c.temperature_sensors) {
    channels.get(t.channel.logger)?.set(t.channel.channel, {
      groupId: null,
      location: t.description ?? `temperature sensor ${t.id}`,
      validMin: t.valid_range_degC[0] - t.offset_degC,
      validMax: t.valid_range_degC[1] - t.offset_degC,
      unit: 'degC',
    });
  }

  const loggers = new Map<string, LoggerInfo>(c.loggers.map((l) => [l.id, {
    zone: zonesOfLogger.get(l.id)?.[0] ?? STRUCTURE_ZONE,
    location: l.description ?? l.id,
    expectedIntervalS: l.expected_interval_s,
    channels: channels.get(l.id) ?? new Map(),
  }]));
  return { structureId: structure.structureId, groups, loggers };
}
