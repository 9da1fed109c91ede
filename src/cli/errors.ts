import { BrokerLoginRefusedError } from '../adapters/mqtt/login-refused.js';
import { ConfigError } from '../config/compile.js';
import { MissingReadingError, UnknownGroupError, UnknownReadingError } from '../results/calculate.js';
import { EXIT } from './exit-codes.js';

export { EXIT } from './exit-codes.js';

/** `status`, `alarms`: the broker did not answer; `url` has its credentials redacted. */
export class BrokerUnreachableError extends Error {
  constructor(readonly url: string, readonly why: string, configFile: string) {
    super(`cannot reach the broker at ${url} (${why}): nothing can be said about the processors; check mqtt.url in ${configFile}, the network and the broker`);
    this.name = 'BrokerUnreachableError';
  }
}

/** `strainward status` found no healthy processor status, or an unhealthy one. */
export class SilentProcessorError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'SilentProcessorError';
  }
}

/** `strainward ack`: the processor refused the acknowledgement, or gave no verdict within the wait. */
export class AckRefusedError extends Error {
  constructor(message: string, readonly verdict: { code: string | null } | null) {
    super(message);
    this.name = 'AckRefusedError';
  }
}

/** `strainward rezero`: the processor refused the request, or gave no verdict within the wait. */
export class RezeroRefusedError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RezeroRefusedError';
  }
}

/** `strainward replay`: the capture has gaps (damaged members, missing files) and they were not accepted. */
export class CaptureGapsError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'CaptureGapsError';
  }
}

/** `strainward replay`: the capture holds no message in the window asked for. */
export class EmptyWindowError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'EmptyWindowError';
  }
}

/** Named error for bad command-line options (after zod validation). */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

export function exitCodeFor(err: unknown): number {
  if (err instanceof ConfigError) return EXIT.config;
  if (err instanceof SilentProcessorError) return EXIT.silent;
  if (err instanceof AckRefusedError || err instanceof RezeroRefusedError) return EXIT.refused;
  if (err instanceof CaptureGapsError) return EXIT.gaps;
  if (err instanceof EmptyWindowError) return EXIT.emptyWindow;
  if (err instanceof BrokerLoginRefusedError) return EXIT.brokerLogin;
  if (err instanceof BrokerUnreachableError) return EXIT.brokerUnreachable;
  if (err instanceof UsageError || err instanceof UnknownGroupError || err instanceof MissingReadingError
    || err instanceof UnknownReadingError) return EXIT.usage;
  return EXIT.runtime;
}
