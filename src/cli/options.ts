import type { z } from 'zod';
import { problemsFromZod } from '../validation/issues.js';
import { UsageError } from './errors.js';

/** Validates command-line options with a zod schema; every problem in one UsageError naming the option. */
export function parseOptions<S extends z.ZodType>(schema: S, raw: unknown): z.infer<S> {
  const r = schema.safeParse(raw, { reportInput: true });
  if (r.success) return r.data;
  const problems = problemsFromZod(r.error).map((p) => `  --${p.path.replace(/\[\d+\]$/, '')}: ${p.reason}`);
  throw new UsageError(`invalid options\n${problems.join('\n')}`);
}
