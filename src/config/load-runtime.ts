import { readFile } from 'node:fs/promises';
import { dirname, resolve } from 'node:path';
import { parse as parseYaml } from 'yaml';
import { wrongFileKind } from '../validation/file-kind.js';
import { problemsFromZod } from '../validation/issues.js';
import { ConfigError, type CompiledStructure } from './compile.js';
import { loadStructureFile } from './load.js';
import type { UnitIdentity } from '../cluster/unit-topics.js';
import { RuntimeConfigSchema, type RuntimeConfig } from './runtime-schema.js';

/** A runtime file, its structure, and the folder relative paths are resolved against. */
export interface LoadedRuntime {
  runtime: RuntimeConfig;
  structure: CompiledStructure;
  baseDir: string;
  /**
   * A work unit's loggers (src/cluster): the processor subscribes to these loggers' topics only and
   * answers acknowledgements only for alarms on them; its own parts' faults carry its id. Absent: the whole structure.
   */
  unit?: UnitIdentity;
}

/** Parses a runtime configuration document; throws ConfigError listing every problem. */
export function parseRuntimeConfig(doc: unknown, source: string): RuntimeConfig {
  const misplaced = wrongFileKind(doc, 'runtime');
  if (misplaced !== null) throw new ConfigError(source, [misplaced]);
  const r = RuntimeConfigSchema.safeParse(doc, { reportInput: true });
  if (!r.success) throw new ConfigError(source, problemsFromZod(r.error, [], RuntimeConfigSchema));
  return r.data;
}

/** Reads a runtime file (YAML or JSON) and the structure file it names. */
export async function loadRuntimeFile(path: string, structureOverride?: string): Promise<LoadedRuntime> {
  const text = await readFile(path, 'utf8');
  const doc = path.endsWith('.json') ? JSON.parse(text) : parseYaml(text, { merge: true });
  const runtime = parseRuntimeConfig(doc, path);
  const baseDir = dirname(resolve(path));
  const structure = await loadStructureFile(structureOverride ?? resolve(baseDir, runtime.structure));
  return { runtime, structure, baseDir };
}
