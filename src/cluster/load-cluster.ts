import { readFile } from 'node:fs/promises';
import { dirname, isAbsolute, resolve } from 'node:path';
import { parse as parseYaml } from 'yaml';
import { compileStructure, ConfigError } from '../config/compile.js';
import { loadRuntimeFile, type LoadedRuntime } from '../config/load-runtime.js';
import type { RuntimeConfig } from '../config/runtime-schema.js';
import { problemsFromZod } from '../validation/issues.js';
import { ClusterConfigSchema, type ClusterConfig } from './cluster-schema.js';
import { checkSplit, unitStructureConfig } from './unit-structure.js';

/** One work unit ready to run: its runtime (own client id, own files) and the part of the structure it processes. */
export interface WorkUnit {
  /** `<structure>/<unit>`: unique in the cluster, the etcd lock's name. */
  key: string;
  structureId: string;
  unitId: string;
  loggers: string[];
  loaded: LoadedRuntime;
}

export interface LoadedCluster {
  config: ClusterConfig;
  baseDir: string;
  units: WorkUnit[];
}

/** Every file a unit writes, moved into its own folder on the shared volume. */
function unitRuntime(rc: RuntimeConfig, dir: string, clientId: string, unitId: string, split: boolean): RuntimeConfig {
  const inUnit = (p: string): string => resolve(dir, isAbsolute(p) ? p.slice(1) : p.replace(/^(\.\.\/)+/, ''));
  return {
    ...rc,
    mqtt: { ...rc.mqtt, client_id: clientId },
    line_protocol: { ...rc.line_protocol, dir: inUnit(rc.line_protocol.dir) },
    dead_letters: { ...rc.dead_letters, file: inUnit(rc.dead_letters.file) },
    alarms: { state_file: inUnit(rc.alarms.state_file), log_file: inUnit(rc.alarms.log_file) },
    ...(rc.capture ? { capture: { ...rc.capture, dir: inUnit(rc.capture.dir) } } : {}),
    ...(rc.database ? { database: { ...rc.database, spool: { ...rc.database.spool, dir: inUnit(rc.database.spool.dir) } } } : {}),
    fatigue: { ...rc.fatigue, state_file: inUnit(rc.fatigue.state_file) },
    storage_state_file: inUnit(rc.storage_state_file),
    rezero: { overrides_file: inUnit(rc.rezero.overrides_file), audit_file: inUnit(rc.rezero.audit_file) },
    // A split structure's units each keep their own open-alarm list.
    state_topics: split && rc.state_topics.alarms_topic !== '' ? { ...rc.state_topics, alarms_topic: `${rc.state_topics.alarms_topic}/${unitId}` } : rc.state_topics,
    // One live page and one metrics endpoint per processor at most, not per unit (a unit moves between processors).
    live_page: undefined,
    metrics: undefined,
  };
}

/** Parses a cluster document; throws ConfigError listing every problem. */
export function parseClusterConfig(doc: unknown, source: string): ClusterConfig {
  const r = ClusterConfigSchema.safeParse(doc, { reportInput: true });
  if (!r.success) throw new ConfigError(source, problemsFromZod(r.error, [], ClusterConfigSchema));
  return r.data;
}

/**
 * Reads a cluster file, its runtime files and their structures, checks every split and compiles
 * every unit. A structure without `split` is one unit with the id of the structure.
 */
export async function loadClusterFile(path: string): Promise<LoadedCluster> {
  const text = await readFile(path, 'utf8');
  const config = parseClusterConfig(path.endsWith('.json') ? JSON.parse(text) : parseYaml(text, { merge: true }), path);
  const baseDir = dirname(resolve(path));
  const sharedDir = resolve(baseDir, config.cluster.shared_dir);
  const units: WorkUnit[] = [];
  const problems: { path: string; reason: string }[] = [];
  for (const [i, entry] of config.units.entries()) {
    const loaded = await loadRuntimeFile(resolve(baseDir, entry.runtime));
    const c = loaded.structure.config;
    const split = entry.split ?? [{ id: c.structure.id, loggers: c.loggers.map((l) => l.id) }];
    const splitProblems = checkSplit(c, split, `units[${i}].split`);
    problems.push(...splitProblems);
    if (splitProblems.length > 0) continue;
    for (const [j, u] of split.entries()) {
      const key = `${c.structure.id}/${u.id}`;
      if (units.some((x) => x.key === key)) { problems.push({ path: `units[${i}]`, reason: `unit "${key}" is named twice` }); continue; }
      const compiled = compileStructure(unitStructureConfig(c, new Set(u.loggers)));
      if (!compiled.ok) {
        for (const p of compiled.problems) problems.push({ path: `units[${i}].split[${j}]`, reason: `the unit's part of the structure: ${p.path}: ${p.reason}` });
        continue;
      }
      const clientId = entry.split === undefined ? loaded.runtime.mqtt.client_id : `${loaded.runtime.mqtt.client_id}-${u.id}`;
      units.push({
        key, structureId: c.structure.id, unitId: u.id, loggers: [...u.loggers],
        loaded: { runtime: unitRuntime(loaded.runtime, resolve(sharedDir, c.structure.id, u.id), clientId, u.id, entry.split !== undefined), structure: compiled.structure, baseDir: loaded.baseDir, unit: {
          id: u.id, loggers: [...u.loggers], groups: compiled.structure.groups.map((g) => g.config.id), first: j === 0,
          structureLoggers: c.loggers.map((l) => l.id), structureGroups: c.groups.map((g) => g.id),
        } },
      });
    }
  }
  if (problems.length > 0) throw new ConfigError(path, problems);
  return { config, baseDir, units };
}
