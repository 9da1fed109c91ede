import type { z } from 'zod';
import { knownKeysAt } from './known-keys.js';
import { nearest } from './nearest.js';

/**
 * Validation problems as data: a path and a reason, rendered `groups[2].elements[1].angle_deg:
 * expected a number, received string`. One formatter for every boundary (configuration files,
 * CLI options, HTTP bodies) so messages read the same everywhere.
 */
export interface ValidationProblem {
  /** Rendered path, e.g. `groups[2].elements[1].angle_deg`; `(root)` for the whole document. */
  path: string;
  reason: string;
}

/** `['groups', 2, 'id']` -> `groups[2].id`. */
export function formatPath(path: readonly PropertyKey[]): string {
  let out = '';
  for (const part of path) {
    if (typeof part === 'number') out += `[${part}]`;
    else out += out === '' ? String(part) : `.${String(part)}`;
  }
  return out === '' ? '(root)' : out;
}

const ARTICLE: Record<string, string> = {
  number: 'a number', string: 'a string', boolean: 'a boolean', array: 'an array', object: 'an object',
  int: 'an integer', null: 'null', record: 'an object', tuple: 'an array',
};

function received(input: unknown): string {
  if (input === undefined) return 'nothing (the field is missing)';
  if (input === null) return 'null';
  if (Array.isArray(input)) return 'an array';
  if (typeof input === 'number' && !Number.isFinite(input)) return String(input);
  return typeof input;
}

/** Reason text for one zod issue (zod 4 issue shapes; `input` is present when parsed with reportInput). */
export function describeIssue(issue: z.core.$ZodIssue): string {
  // A message written in the schema (e.g. `.lt(0.5, 'Poisson ratio must be < 0.5')`) says it best.
  if (!/^(Invalid|Too |Unrecognized)/.test(issue.message)) return issue.message;
  switch (issue.code) {
    case 'invalid_type':
      return `expected ${ARTICLE[issue.expected] ?? issue.expected}, received ${received(issue.input)}`;
    case 'unrecognized_keys':
      return `unknown key${issue.keys.length > 1 ? 's' : ''} ${issue.keys.map((k) => `"${k}"`).join(', ')}`;
    case 'too_small':
      if (issue.origin === 'array') return `needs at least ${issue.minimum} entr${issue.minimum === 1 ? 'y' : 'ies'}`;
      if (issue.origin === 'string') return 'must not be empty';
      return `must be ${issue.inclusive ? '>=' : '>'} ${issue.minimum}, received ${String(issue.input)}`;
    case 'too_big':
      if (issue.origin === 'array') return `takes at most ${issue.maximum} entries`;
      return `must be ${issue.inclusive ? '<=' : '<'} ${issue.maximum}, received ${String(issue.input)}`;
    case 'invalid_value':
      return `expected one of ${issue.values.map((v) => JSON.stringify(v)).join(', ')}, received ${issue.input === undefined ? received(undefined) : JSON.stringify(issue.input)}`;
    case 'invalid_union':
      if (issue.discriminator) {
        // An optional discriminator lists `undefined` among its values: absent is said by the schema's docs, not here.
        const options = ('options' in issue ? (issue.options ?? []) : []).filter((v) => v !== undefined);
        return `unknown ${issue.discriminator}, expected one of ${options.map((v) => JSON.stringify(v)).join(', ')}`;
      }
      return issue.message;
    case 'invalid_format':
      return `not a valid ${issue.format}`;
    default:
      return issue.message;
  }
}

/**
 * All problems of a failed zod parse, prefixed by an optional base path. Given the schema that was
 * parsed, an unknown key is answered with the nearest key the object accepts ("did you mean").
 */
export function problemsFromZod(error: z.ZodError, base: readonly PropertyKey[] = [], schema?: z.ZodType): ValidationProblem[] {
  return error.issues.map((issue) => {
    let reason = describeIssue(issue);
    if (schema !== undefined && issue.code === 'unrecognized_keys') {
      const known = knownKeysAt(schema, issue.path);
      const hints = issue.keys.map((k) => [k, nearest(k, known)] as const).filter(([, n]) => n !== null);
      if (hints.length > 0) reason += ` (did you mean ${hints.map(([k, n]) => `"${n}" for "${k}"`).join(', ')}?)`;
    }
    return { path: formatPath([...base, ...issue.path]), reason };
  });
}

export function renderProblems(problems: readonly ValidationProblem[]): string {
  return problems.map((p) => `${p.path}: ${p.reason}`).join('\n');
}
