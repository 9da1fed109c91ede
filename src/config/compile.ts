import { compileFatigue, type CompiledFatigue } from './compile-fatigue.js';
import { compileStorage, type CompiledStorage } from './compile-storage.js';
import type { AlarmsConfig } from '../alarms/schema.js';
import type { ChannelDirectory } from '../model/channel-directory.js';
import type { GroupModel } from '../mechanics/group-model.js';
import { problemsFromZod, type ValidationProblem } from '../validation/issues.js';
import { compileGroup } from './compile-group.js';
import { compileMaterial, type MaterialModel } from './compile-material.js';
import { crossCheck } from './cross-check.js';
import { checkRezeroScopes } from '../rezero/schema.js';
import type { GroupConfig } from './group-schema.js';
import { StructureConfigSchema, type StructureConfig } from './structure-schema.js';

/** A temperature sensor as the pipeline reads it. */
export interface TemperatureChannel {
  sensorId: string;
  loggerId: string;
  channelId: string;
  offsetC: number;
  validMin: number;
  validMax: number;
}

/** One group ready for the pipeline: its configuration, its numeric model and where its inputs come from. */
export interface CompiledGroup {
  config: GroupConfig;
  model: GroupModel;
  loggerId: string;
  /** Channel id of each element, in element order. */
  elementChannels: string[];
  companion: { loggerId: string; channelId: string } | null;
  temperatures: TemperatureChannel[];
}

/** A structure configuration checked and compiled: everything that depends only on configuration, computed once. */
export interface CompiledStructure {
  config: StructureConfig;
  structureId: string;
  directory: ChannelDirectory;
  groups: CompiledGroup[];
  groupsById: Map<string, CompiledGroup>;
  /** Groups whose strain elements a logger reads. */
  groupsByLogger: Map<string, CompiledGroup[]>;
  temperatureSensors: Map<string, TemperatureChannel>;
  materials: Map<string, MaterialModel>;
  /** The validated `alarms` section (defaults filled in); null when the file has none or disables it. */
  alarms: AlarmsConfig | null;
  /** `alarms: { disabled: true }`: no alarms, on purpose (the live job starts, and warns). */
  alarmsDisabled: boolean;
  /** The compiled `fatigue` section; null or absent when the file has none. */
  fatigue?: CompiledFatigue | null;
  /** The compiled `storage` section (all `full` when the file has none); absent in structures built by hand. */
  storage?: CompiledStorage;
}

export type CompileResult = { ok: true; structure: CompiledStructure } | { ok: false; problems: ValidationProblem[] };

/** Validates and compiles a parsed document (from YAML or JSON). Pure: returns all problems at once. */
export function compileStructure(input: unknown): CompileResult {
  const parsed = StructureConfigSchema.safeParse(input, { reportInput: true });
  if (!parsed.success) return { ok: false, problems: problemsFromZod(parsed.error, [], StructureConfigSchema) };
  const c = parsed.data;
  const problems = [...crossCheck(c), ...checkAlarmScopes(c), ...checkRezeroScopes(c)];
  const materials = new Map<string, MaterialModel>();
  c.materials.forEach((m, i) => {
    const r = compileMaterial(m);
    if (r.ok) materials.set(m.id, r.model);
    else problems.push({ path: r.path ? `materials[${i}].${r.path}` : `materials[${i}]`, reason: r.reason });
  });
  if (problems.length > 0) return { ok: false, problems };

  const gaugeById = new Map(c.gauges.map((g) => [g.id, g]));
  const sensorById = new Map<string, TemperatureChannel>(c.temperature_sensors.map((t) => [t.id, {
    sensorId: t.id, loggerId: t.channel.logger, channelId: t.channel.channel,
    offsetC: t.offset_degC, validMin: t.valid_range_degC[0], validMax: t.valid_range_degC[1],
  }]));
  const groups: CompiledGroup[] = [];
  c.groups.forEach((grp, i) => {
    const gauges = grp.elements.map((e) => gaugeById.get(e.gauge)!);
    const companionId = 'companion_gauge' in grp ? grp.companion_gauge : undefined;
    const companion = companionId ? gaugeById.get(companionId)! : null;
    const model = compileGroup(grp, gauges, companion, materials.get(grp.material)!);
    if (model === null) {
      problems.push({ path: `groups[${i}].elements`, reason: 'the element directions do not determine the strain state (plane rosettes need three distinct directions modulo 180 degrees; solid clusters six independent ones)' });
      return;
    }
    groups.push({
      config: grp, model, loggerId: gauges[0].channel.logger,
      elementChannels: gauges.map((g) => g.channel.channel),
      companion: companion ? { loggerId: companion.channel.logger, channelId: companion.channel.channel } : null,
      temperatures: grp.temperature_sensors.map((id) => sensorById.get(id)!),
    });
  });
  const fatigue = c.fatigue ? compileFatigue(c, c.fatigue) : { fatigue: null, problems: [] };
  problems.push(...fatigue.problems);
  const storage = compileStorage(c, c.storage);
  problems.push(...storage.problems);
  if (problems.length > 0) return { ok: false, problems };

  // Logger id -> its channel ids: every message's channels are looked up without building a key.
  const channels = new Map<string, Set<string>>();
  for (const ch of [...c.gauges, ...c.temperature_sensors].map((x) => x.channel)) {
    let onLogger = channels.get(ch.logger);
    if (onLogger === undefined) channels.set(ch.logger, (onLogger = new Set()));
    onLogger.add(ch.channel);
  }
  const loggers = new Set(c.loggers.map((l) => l.id));
  const groupsByLogger = new Map<string, CompiledGroup[]>();
  for (const g of groups) groupsByLogger.set(g.loggerId, [...(groupsByLogger.get(g.loggerId) ?? []), g]);
  return {
    ok: true,
    structure: {
      config: c,
      structureId: c.structure.id,
      directory: {
        structureId: c.structure.id,
        hasLogger: (id) => loggers.has(id),
        hasChannel: (logger, channel) => channels.get(logger)?.has(channel) ?? false,
      },
      groups,
      groupsById: new Map(groups.map((g) => [g.config.id, g])),
      groupsByLogger,
      temperatureSensors: sensorById,
      materials,
      alarms: c.alarms === undefined || c.alarms.disabled === true ? null : c.alarms,
      alarmsDisabled: c.alarms?.disabled === true,
      fatigue: fatigue.fatigue,
      storage: storage.storage!,
    },
  };
}

/** Alarm rule scopes must name groups and zones the structure has (a typo would silently watch nothing). */
function checkAlarmScopes(c: StructureConfig): ValidationProblem[] {
  const problems: ValidationProblem[] = [];
  const groupIds = new Set(c.groups.map((g) => g.id));
  const zones = new Set(c.groups.map((g) => g.zone));
  const detailIds = new Set(c.fatigue?.details.map((d) => d.id) ?? []);
  const rules = c.alarms === undefined || c.alarms.disabled === true ? [] : c.alarms.rules;
  rules.forEach((rule, i) => {
    const at = `alarms.rules[${i}].scope`;
    if ((rule.kind === 'fatigue_damage' || rule.kind === 'fatigue_damage_rate') && c.fatigue === undefined) {
      problems.push({ path: `alarms.rules[${i}].kind`, reason: `${rule.kind} judges fatigue details, and the structure has no \`fatigue\` section` });
    }
    if (rule.scope.kind === 'details') {
      rule.scope.detail_ids.forEach((id, j) => {
        if (!detailIds.has(id)) problems.push({ path: `${at}.detail_ids[${j}]`, reason: `unknown fatigue detail "${id}" (details: ${[...detailIds].join(', ') || 'none'})` });
      });
    }
    if (rule.scope.kind === 'zone' && !zones.has(rule.scope.zone)) {
      problems.push({ path: `${at}.zone`, reason: `unknown zone "${rule.scope.zone}" (zones: ${[...zones].join(', ')})` });
    }
    if (rule.scope.kind === 'groups') {
      rule.scope.group_ids.forEach((id, j) => {
        if (!groupIds.has(id)) problems.push({ path: `${at}.group_ids[${j}]`, reason: `unknown group "${id}"` });
      });
    }
  });
  return problems;
}

/** Named error for the CLI: carries every problem; the CLI maps it to an exit code. */
export class ConfigError extends Error {
  constructor(readonly source: string, readonly problems: ValidationProblem[]) {
    super(`${source}: invalid configuration\n${problems.map((p) => `  ${p.path}: ${p.reason}`).join('\n')}`);
    this.name = 'ConfigError';
  }
}
