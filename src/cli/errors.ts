import { ConfigError } from '../config/compile.js';
import { MissingReadingError, UnknownGroupError } from '../results/calculate.js';

/** Exit codes, in one place: 0 ok, 1 failure at run time, 2 bad usage or options, 3 invalid configuration. */
export const EXIT = { ok: 0, runtime: 1, usage: 2, config: 3 } as const;

/** Named error for bad command-line options (after zod validation). */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

export function exitCodeFor(err: unknown): number {
  if (err instanceof ConfigError) return EXIT.config;
  if (err instanceof UsageError || err instanceof UnknownGroupError || err instanceof MissingReadingError) return EXIT.usage;
  return EXIT.runtime;
}
