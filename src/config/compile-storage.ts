import type { ResultQuantity } from '../model/result.js';
import { RESULT_QUANTITIES } from '../model/result.js';
import type { ValidationProblem } from '../validation/issues.js';
import { nearest } from '../validation/nearest.js';
import { StorageConfigSchema, type StorageConfig } from './storage-schema.js';
import type { StructureConfig } from './structure-schema.js';

/** How one group's results are stored. */
export interface CompiledGroupStorage {
  groupId: string;
  zone: string;
  loggerId: string;
  /** Summary interval, ms of logger time; null: every result is written (`full`). */
  summaryIntervalMs: number | null;
  /** Results the pre-trigger ring holds (summary groups; 0 for full ones). */
  ringCapacity: number;
  /** Elements of the group (their strains ride in the ring for `results.element_strains`). */
  elementGauges: string[];
}

export interface CompiledTrigger {
  id: string;
  kind: 'level' | 'rate';
  quantity: ResultQuantity;
  above: number;
  below: number;
  ratePerS: number;
  windowMs: number;
  /** Groups whose results it watches. */
  groups: ReadonlySet<string>;
}

export interface CompiledStorage {
  groups: Map<string, CompiledGroupStorage>;
  raw: { store: 'full' | 'summary' | 'off'; intervalMs: number };
  beforeMs: number;
  afterMs: number;
  onAlarms: boolean;
  /** Groups a window opened for group g stores (g first): the group, its zone, or every group. */
  windowGroups: Map<string, string[]>;
  triggers: CompiledTrigger[];
  closeAfterMs: number;
  /** Channels of each logger in configuration order (the quantities of sw_raw_summary). */
  loggerChannels: Map<string, string[]>;
  /** True when some group is summarised (windows and rings then matter). */
  anySummary: boolean;
}

/** The structure's compiled storage, or the default (everything full) for a structure built by hand. */
export function storageOf(structure: { config: StructureConfig; storage?: CompiledStorage }): CompiledStorage {
  return structure.storage ?? compileStorage(structure.config, undefined).storage!;
}

/** True when the storage stage keeps state worth persisting (some series is summarised). */
export function storageKeepsState(s: CompiledStorage): boolean {
  return s.anySummary || s.raw.store === 'summary';
}

/** Bytes of one ring slot: time, seq, quality bits, one value per result quantity, one per element. */
export function ringSlotBytes(elements: number): number {
  return 8 * (3 + RESULT_QUANTITIES.length + elements);
}

/**
 * Results a ring keeps past `before_s`: a window opened by a group whose results run ahead (the
 * others wait for temperature, or their logger lags) still finds the part before the trigger.
 */
export const RING_SLACK_MS = 5_000;
/** Default ring size: 1.5 times the scans a logger makes in `before_s` plus the slack, so jitter and bursts fit; at least 16. */
const RING_CAP = 200_000;

/** Compiles the `storage` section (absent: everything full, as before it existed). Pure; every problem at once. */
export function compileStorage(c: StructureConfig, given: StorageConfig | undefined): { storage: CompiledStorage | null; problems: ValidationProblem[] } {
  const s = given ?? StorageConfigSchema.parse({});
  const problems: ValidationProblem[] = [];
  const groupIds = c.groups.map((g) => g.id);
  const loggerInterval = new Map(c.loggers.map((l) => [l.id, l.expected_interval_s]));
  const gaugeLogger = new Map(c.gauges.map((g) => [g.id, g.channel.logger]));
  const overrides = new Map<string, (typeof s.groups)[number]>();
  s.groups.forEach((o, i) => {
    const at = `storage.groups[${i}]`;
    if (!groupIds.includes(o.group)) {
      const near = nearest(o.group, groupIds);
      problems.push({ path: `${at}.group`, reason: `unknown group "${o.group}"${near ? ` (did you mean "${near}"?)` : ''}` });
    } else if (overrides.has(o.group)) problems.push({ path: `${at}.group`, reason: `group "${o.group}" is listed twice` });
    overrides.set(o.group, o);
    const results = o.results ?? s.default.results;
    if (o.interval_s !== undefined && results === 'full') problems.push({ path: `${at}.interval_s`, reason: 'the group is stored in full: an interval applies to `results: summary` only' });
  });
  if (given?.raw.interval_s !== undefined && s.raw.store !== 'summary') problems.push({ path: 'storage.raw.interval_s', reason: `raw readings are stored \`${s.raw.store}\`: an interval applies to \`store: summary\` only` });

  const w = s.event_windows;
  const groups = new Map<string, CompiledGroupStorage>();
  for (const g of c.groups) {
    const o = overrides.get(g.id);
    const summary = (o?.results ?? s.default.results) === 'summary';
    const loggerId = gaugeLogger.get(g.elements[0].gauge) ?? '';
    const scansBefore = Math.ceil(((w.before_s + RING_SLACK_MS / 1000) / (loggerInterval.get(loggerId) ?? 1)) * 1.5);
    groups.set(g.id, {
      groupId: g.id, zone: g.zone, loggerId,
      summaryIntervalMs: summary ? Math.round((o?.interval_s ?? s.default.interval_s) * 1000) : null,
      ringCapacity: summary && w.before_s > 0 ? (w.ring_results ?? Math.min(RING_CAP, Math.max(16, scansBefore))) : 0,
      elementGauges: g.elements.map((e) => e.gauge),
    });
  }
  const anySummary = [...groups.values()].some((g) => g.summaryIntervalMs !== null);
  if (!anySummary && given !== undefined && given.event_windows.triggers.length > 0) {
    problems.push({ path: 'storage.event_windows.triggers', reason: 'every group is stored in full: a window would store nothing more (set `results: summary` for some group)' });
  }

  const zones = new Set(c.groups.map((g) => g.zone));
  const triggerIds = new Set<string>();
  const triggers: CompiledTrigger[] = [];
  w.triggers.forEach((t, i) => {
    const at = `storage.event_windows.triggers[${i}]`;
    if (triggerIds.has(t.id)) problems.push({ path: `${at}.id`, reason: `trigger id "${t.id}" is used twice` });
    triggerIds.add(t.id);
    let watched: string[] = groupIds;
    if (t.scope.kind === 'zone') {
      const zone = t.scope.zone;
      if (!zones.has(zone)) problems.push({ path: `${at}.scope.zone`, reason: `unknown zone "${zone}" (zones: ${[...zones].join(', ')})` });
      watched = c.groups.filter((g) => g.zone === zone).map((g) => g.id);
    } else if (t.scope.kind === 'groups') {
      t.scope.group_ids.forEach((id, j) => { if (!groupIds.includes(id)) problems.push({ path: `${at}.scope.group_ids[${j}]`, reason: `unknown group "${id}"` }); });
      watched = t.scope.group_ids;
    }
    triggers.push({
      id: t.id, kind: t.kind, quantity: t.quantity, groups: new Set(watched),
      above: t.kind === 'level' ? (t.above ?? Number.POSITIVE_INFINITY) : Number.POSITIVE_INFINITY,
      below: t.kind === 'level' ? (t.below ?? Number.NEGATIVE_INFINITY) : Number.NEGATIVE_INFINITY,
      ratePerS: t.kind === 'rate' ? t.rate_per_s : Number.POSITIVE_INFINITY,
      windowMs: t.kind === 'rate' ? t.window_s * 1000 : 0,
    });
  });

  const windowGroups = new Map<string, string[]>();
  for (const g of c.groups) {
    const others = w.extent === 'group' ? [] : c.groups.filter((x) => x.id !== g.id && (w.extent === 'structure' || x.zone === g.zone)).map((x) => x.id);
    windowGroups.set(g.id, [g.id, ...others]);
  }
  const loggerChannels = new Map<string, string[]>(c.loggers.map((l) => [l.id, []]));
  for (const ch of [...c.gauges, ...c.temperature_sensors].map((x) => x.channel)) {
    const list = loggerChannels.get(ch.logger);
    if (list !== undefined && !list.includes(ch.channel)) list.push(ch.channel);
  }
  if (problems.length > 0) return { storage: null, problems };
  return {
    storage: {
      groups, raw: { store: s.raw.store, intervalMs: Math.round((s.raw.interval_s ?? s.default.interval_s) * 1000) },
      beforeMs: w.before_s * 1000, afterMs: w.after_s * 1000, onAlarms: w.on_alarms, windowGroups, triggers,
      closeAfterMs: s.close_after_s * 1000, loggerChannels, anySummary,
    },
    problems,
  };
}
