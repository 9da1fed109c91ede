import { readFile } from 'node:fs/promises';
import { parse as parseYaml } from 'yaml';
import { wrongFileKind } from '../validation/file-kind.js';
import { compileStructure, ConfigError, type CompiledStructure } from './compile.js';

/** Reads a YAML or JSON structure file and compiles it; throws ConfigError listing every problem. */
export async function loadStructureFile(path: string): Promise<CompiledStructure> {
  const text = await readFile(path, 'utf8');
  let doc: unknown;
  try {
    doc = path.endsWith(".json") ? JSON.parse(text) : parseYaml(text, { merge: true });
  } catch (err) {
    throw new ConfigError(path, [{ path: '(root)', reason: `not valid ${path.endsWith('.json') ? 'JSON' : 'YAML'}: ${(err as Error).message}` }]);
  }
  const misplaced = wrongFileKind(doc, 'structure');
  if (misplaced !== null) throw new ConfigError(path, [misplaced]);
  const r = compileStructure(doc);
  if (!r.ok) throw new ConfigError(path, r.problems);
  return r.structure;
}
