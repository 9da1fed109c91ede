import { readFile } from 'node:fs/promises';
import { dirname, resolve } from 'node:path';
import { Command } from 'commander';
import { parse as parseYaml } from 'yaml';
import { z } from 'zod';
import { structureSummary, structureSummaryLines, type StructureSummary } from '../../app/monitoring-summary.js';
import { runtimeSummary, runtimeSummaryLines, type RuntimeSummary } from '../../app/runtime-summary.js';
import { compileStructure, ConfigError, type CompiledStructure } from '../../config/compile.js';
import { loadStructureFile } from '../../config/load.js';
import { parseRuntimeConfig } from '../../config/load-runtime.js';
import { detectFileKind } from '../../validation/file-kind.js';
import { UsageError } from '../errors.js';
import { parseOptions } from '../options.js';

export const ValidateOptionsSchema = z.strictObject({
  config: z.string().min(1),
  json: z.boolean().default(false),
});

/** A file found valid, and what the processor would monitor with it. */
export interface ValidationReport {
  file: string;
  kind: 'structure' | 'runtime';
  valid: true;
  /** Runtime files: the structure file they name. */
  structure_file?: string;
  runtime?: RuntimeSummary;
  structure: StructureSummary;
}

async function readDocument(path: string): Promise<unknown> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new UsageError(`${path}: cannot read it (${code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'a directory' : code ?? 'error'})`);
  }
  try {
    return path.endsWith('.json') ? JSON.parse(text) : parseYaml(text, { merge: true });
  } catch (err) {
    throw new ConfigError(path, [{ path: '(root)', reason: `not valid ${path.endsWith('.json') ? 'JSON' : 'YAML'}: ${(err as Error).message}` }]);
  }
}

/**
 * Checks a structure or a runtime file (which one, from its keys) exactly as `run` would load it,
 * and says what would be monitored. Throws ConfigError (exit 3) naming every bad field and why: for
 * a runtime file, the problems of the structure file it names come with that file's path.
 */
export async function validateFile(raw: unknown): Promise<ValidationReport> {
  const o = parseOptions(ValidateOptionsSchema, raw);
  const doc = await readDocument(o.config);
  const kind = detectFileKind(doc);
  if (kind === null) {
    throw new ConfigError(o.config, [{
      path: '(root)',
      reason: 'neither a structure file (it would describe `groups` and `gauges`) nor a runtime file (it would name `structure: <file>` and the broker under `mqtt`)',
    }]);
  }
  if (kind === 'structure') {
    const r = compileStructure(doc);
    if (!r.ok) throw new ConfigError(o.config, r.problems);
    return { file: o.config, kind, valid: true, structure: structureSummary(r.structure) };
  }
  const runtime = parseRuntimeConfig(doc, o.config);
  const baseDir = dirname(resolve(o.config));
  const structureFile = resolve(baseDir, runtime.structure);
  let structure: CompiledStructure;
  try {
    structure = await loadStructureFile(structureFile);
  } catch (err) {
    if (err instanceof ConfigError) throw err;
    const code = (err as NodeJS.ErrnoException).code ?? (err as Error).message;
    throw new ConfigError(o.config, [{ path: 'structure', reason: `the structure file ${structureFile} cannot be read (${code === 'ENOENT' ? 'no such file' : code})` }]);
  }
  return {
    file: o.config, kind, valid: true, structure_file: structureFile,
    runtime: runtimeSummary(runtime, structure, baseDir), structure: structureSummary(structure),
  };
}

/** The report as lines a person reads. */
export function validationLines(r: ValidationReport): string[] {
  const head = r.kind === 'structure' ? `${r.file}: a valid structure file` : `${r.file}: a valid runtime file, with the valid structure file ${r.structure_file}`;
  return [head, '', ...(r.runtime ? [...runtimeSummaryLines(r.runtime), ''] : []), ...structureSummaryLines(r.structure)];
}

/** `strainward validate`: check a file and show what would be monitored. */
export function validateCommand(): Command {
  return new Command('validate')
    .description('check a structure or runtime file (which one, from its keys) and print what would be monitored; exit 3 naming every bad field')
    .requiredOption('-c, --config <file>', 'structure or runtime file (YAML or JSON)')
    .option('--json', 'one JSON object instead of lines (invalid: {"valid": false, "problems": [...]})')
    .action(async (raw: unknown) => {
      const json = (raw as { json?: boolean }).json === true;
      try {
        const report = await validateFile(raw);
        process.stdout.write(json ? `${JSON.stringify(report)}\n` : `${validationLines(report).join('\n')}\n`);
      } catch (err) {
        if (json && err instanceof ConfigError) {
          process.stdout.write(`${JSON.stringify({ file: (raw as { config?: string }).config, valid: false, source: err.source, problems: err.problems })}\n`);
        }
        throw err;
      }
    });
}
