import type { SchedulerLike } from 'rxjs';
import type { DeadLetterSink } from '../adapters/deadletter/sink.js';
import type { DeadLetter } from '../model/rejection.js';
import { failureSummary, type FailureSummary, type LogLine } from './failure-summary.js';

/**
 * Dead letters as warning lines a person can read, rate-limited per logger: the first refusal
 * after a quiet interval at once, then at most one line per `every_ms` with the count and the first
 * reason of the interval (a logger refused on every scan would drown every other line).
 * `loggerOf` names the logger of a topic (the topic itself when it names none).
 */
export function deadLetterLog(inner: DeadLetterSink, warn: LogLine, every_ms: number, scheduler: SchedulerLike, loggerOf: (topic: string) => string): DeadLetterSink & { stop(): void } {
  const perLogger = new Map<string, FailureSummary>();
  return {
    write(deadLetter: DeadLetter) {
      const logger = loggerOf(deadLetter.topic);
      let summary = perLogger.get(logger);
      if (summary === undefined) {
        summary = failureSummary((event, d = {}) => warn(event, {
          logger, messages: d.failures, over_s: d.over_s, first_reason: d.first_reason ?? d.reason,
        }), 'dead_letters', every_ms, scheduler);
        perLogger.set(logger, summary);
      }
      const first = deadLetter.rejections[0];
      summary.note(first === undefined ? 'refused' : `${first.code}${first.path === '' ? '' : ` at ${first.path}`}: ${first.reason}`);
      return inner.write(deadLetter);
    },
    stop() { for (const s of perLogger.values()) s.stop(); },
  };
}
