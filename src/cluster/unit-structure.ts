import type { StructureConfig } from '../config/structure-schema.js';
import type { ValidationProblem } from '../validation/issues.js';
import type { UnitSplit } from './cluster-schema.js';

/** The loggers whose readings a group needs: its elements', its companion's and its temperature sensors'. */
export function loggersOfGroup(c: StructureConfig, groupIndex: number): Set<string> {
  const grp = c.groups[groupIndex];
  const gaugeLogger = new Map(c.gauges.map((g) => [g.id, g.channel.logger]));
  const sensorLogger = new Map(c.temperature_sensors.map((t) => [t.id, t.channel.logger]));
  const out = new Set<string>();
  for (const e of grp.elements) { const l = gaugeLogger.get(e.gauge); if (l !== undefined) out.add(l); }
  const companion = 'companion_gauge' in grp ? grp.companion_gauge : undefined;
  if (companion !== undefined) { const l = gaugeLogger.get(companion); if (l !== undefined) out.add(l); }
  for (const t of grp.temperature_sensors) { const l = sensorLogger.get(t); if (l !== undefined) out.add(l); }
  return out;
}

/**
 * Checks a split of a structure into units: every logger in exactly one unit, unit ids unique,
 * and every group's loggers inside one unit (a group split over two processors could never be
 * computed: its temperature join and held frames are per group). Pure; all problems at once.
 */
export function checkSplit(c: StructureConfig, split: readonly UnitSplit[], at: string): ValidationProblem[] {
  const problems: ValidationProblem[] = [];
  const known = new Set(c.loggers.map((l) => l.id));
  const unitOf = new Map<string, string>();
  const ids = new Set<string>();
  split.forEach((u, i) => {
    if (ids.has(u.id)) problems.push({ path: `${at}[${i}].id`, reason: `unit id "${u.id}" is used twice` });
    ids.add(u.id);
    u.loggers.forEach((l, j) => {
      if (!known.has(l)) problems.push({ path: `${at}[${i}].loggers[${j}]`, reason: `unknown logger "${l}" (loggers: ${[...known].join(', ')})` });
      else if (unitOf.has(l)) problems.push({ path: `${at}[${i}].loggers[${j}]`, reason: `logger "${l}" is already in unit "${unitOf.get(l)}"` });
      else unitOf.set(l, u.id);
    });
  });
  for (const l of known) {
    if (!unitOf.has(l)) problems.push({ path: at, reason: `logger "${l}" is in no unit: its readings would never be processed` });
  }
  c.groups.forEach((g, i) => {
    const units = new Set([...loggersOfGroup(c, i)].map((l) => unitOf.get(l)).filter((u) => u !== undefined));
    if (units.size > 1) {
      problems.push({ path: at, reason: `group "${g.id}" reads loggers in units ${[...units].map((u) => `"${u}"`).join(' and ')}: a group's loggers (strain, companion, temperature) must be in one unit` });
    }
  });
  return problems;
}

/**
 * The part of a structure configuration a unit processes: its loggers, their gauges and sensors,
 * the groups they carry, the alarm rules scoped to what remains and the fatigue details on it.
 * The structure id stays the same (results keep their series). Pure; assumes `checkSplit` passed.
 */
export function unitStructureConfig(c: StructureConfig, loggers: ReadonlySet<string>): StructureConfig {
  const gauges = c.gauges.filter((g) => loggers.has(g.channel.logger));
  const groups = c.groups.filter((_, i) => [...loggersOfGroup(c, i)].every((l) => loggers.has(l)));
  const groupIds = new Set(groups.map((g) => g.id));
  const zones = new Set(groups.map((g) => g.zone));
  const gaugeIds = new Set(gauges.map((g) => g.id));
  const details = c.fatigue?.details.filter((d) => (d.group !== undefined ? groupIds.has(d.group) : d.gauge !== undefined && gaugeIds.has(d.gauge))) ?? [];
  const fatigue = c.fatigue === undefined || details.length === 0 ? undefined : { ...c.fatigue, details };
  const detailIds = new Set(details.map((d) => d.id));
  type Rule = NonNullable<StructureConfig['alarms']> extends infer A ? A extends { rules: Array<infer R> } ? R : never : never;
  const scoped = (r: Rule): Rule[] => {
    const s = r.scope;
    if (s.kind === 'zone') return zones.has(s.zone) ? [r] : [];
    if (s.kind === 'groups') {
      const kept = s.group_ids.filter((id) => groupIds.has(id));
      return kept.length === 0 ? [] : [{ ...r, scope: { ...s, group_ids: kept } } as Rule];
    }
    if (s.kind === 'details') {
      const kept = s.detail_ids.filter((id) => detailIds.has(id));
      return kept.length === 0 ? [] : [{ ...r, scope: { ...s, detail_ids: kept } } as Rule];
    }
    // A structure-wide fatigue rule needs fatigue details in the unit.
    return (r.kind === 'fatigue_damage' || r.kind === 'fatigue_damage_rate') && fatigue === undefined ? [] : [r];
  };
  const alarms = c.alarms === undefined || !('rules' in c.alarms) ? c.alarms : { ...c.alarms, rules: c.alarms.rules.flatMap(scoped) };
  // Who may rezero what: kept for the groups and zones this unit has.
  const allowed = c.rezero?.allowed
    .map((a) => ({ ...a, groups: a.groups.filter((id) => groupIds.has(id)), zones: a.zones.filter((z) => zones.has(z)) }))
    .filter((a) => a.groups.length + a.zones.length > 0) ?? [];
  const rezero = c.rezero === undefined || allowed.length === 0 ? undefined : { ...c.rezero, allowed };
  return {
    ...c,
    rezero,
    loggers: c.loggers.filter((l) => loggers.has(l.id)),
    temperature_sensors: c.temperature_sensors.filter((t) => loggers.has(t.channel.logger)),
    gauges,
    groups,
    alarms,
    fatigue,
  };
}
