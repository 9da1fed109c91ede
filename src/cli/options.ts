import type { z } from 'zod';
import { problemsFromZod } from '../validation/issues.js';
import { UsageError } from './errors.js';

/** `waitMs` -> `--wait-ms`: the option as the user typed it, not commander's property name. */
export function optionFlag(key: string): string {
  return `--${key.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}`;
}

/** Validates command-line options with a zod schema; every problem in one UsageError (exit 2) naming the option. */
export function parseOptions<S extends z.ZodType>(schema: S, raw: unknown): z.infer<S> {
  const r = schema.safeParse(raw, { reportInput: true });
  if (r.success) return r.data;
  const problems = problemsFromZod(r.error).map((p) => {
    const key = p.path.replace(/\[\d+\]$/, '');
    return `  ${key === '(root)' ? 'options' : optionFlag(key)}: ${p.reason}`;
  });
  throw new UsageError(`invalid options\n${problems.join('\n')}`);
}
