import { BrokerLoginRefusedError } from '../adapters/mqtt/login-refused.js';
import { ConfigError } from '../config/compile.js';
import { MissingReadingError, UnknownGroupError, UnknownReadingError } from '../results/calculate.js';

/**
 * Exit codes, in one place: 0 ok, 1 failure at run time, 2 bad usage or options, 3 invalid
 * configuration, 4 a processor is silent (`status`: offline, stopped, stale or absent), 5 an
 * acknowledgement refused by the processor or left without a verdict (`ack`), 6 the replayed capture
 * has gaps (`replay` without `--accept-gaps`; the output and report are written all the same), 7 the
 * broker refused the login (user name, password, authorisation; at start-up or on a later reconnect),
 * 8 the replay window holds no data (`replay`: nothing to replay, nothing written), 9 the broker
 * cannot be reached (`status`, `alarms`: nothing can be said about the processors).
 */
export const EXIT = { ok: 0, runtime: 1, usage: 2, config: 3, silent: 4, refused: 5, gaps: 6, brokerLogin: 7, emptyWindow: 8, brokerUnreachable: 9 } as const;

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
  if (err instanceof AckRefusedError) return EXIT.refused;
  if (err instanceof CaptureGapsError) return EXIT.gaps;
  if (err instanceof EmptyWindowError) return EXIT.emptyWindow;
  if (err instanceof BrokerLoginRefusedError) return EXIT.brokerLogin;
  if (err instanceof BrokerUnreachableError) return EXIT.brokerUnreachable;
  if (err instanceof UsageError || err instanceof UnknownGroupError || err instanceof MissingReadingError
    || err instanceof UnknownReadingError) return EXIT.usage;
  return EXIT.runtime;
}
