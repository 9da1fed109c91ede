import type { AlarmTransition, LoggerInfo, RefusedMessage } from '../types.js';
import { evaluate, settledAtZero, type EngineContext } from './evaluate.js';
import { alarmKey, loggerSubjectKey } from './key-cache.js';
import { healthDescriptor, healthEvaluation } from './health-common.js';

/**
 * The logger's clock against the processor's for one message: offset = logger time - arrival
 * time. Raises clock_offset when ahead by more than ahead_s or behind by more than behind_s, clears
 * otherwise. Mutates `ctx.state`.
 */
export function evaluateClock(ctx: EngineContext, loggerId: string, logger: LoggerInfo, timeMs: number, arrivalMs: number): AlarmTransition[] {
  const clock = ctx.cfg.health.clock_offset;
  if (!clock.enabled) return [];
  const offsetS = (timeMs - arrivalMs) / 1000;
  const ahead = offsetS > clock.ahead_s;
  const present = ahead || offsetS < -clock.behind_s;
  const subjectKey = loggerSubjectKey(loggerId);
  if (!present && settledAtZero(ctx, alarmKey('clock_offset', subjectKey), undefined, offsetS, null)) return [];
  const d = healthDescriptor(ctx, 'clock_offset', subjectKey, { kind: 'logger', loggerId },
    logger.zone, logger.location, 'clock_offset_s', 's');
  return evaluate(ctx, d, healthEvaluation(ctx, 'clock_offset', present, arrivalMs, offsetS,
    ahead ? clock.ahead_s : -clock.behind_s));
}

/**
 * A message the decoder refused because it was dated too far ahead of the processor's clock is
 * still evidence about its logger's clock: it raises clock_offset like an accepted one would (the
 * reading itself never reaches the results). Other refusals say nothing of the clock. Mutates `ctx.state`.
 */
export function evaluateRefused(ctx: EngineContext, input: RefusedMessage): AlarmTransition[] {
  const logger = ctx.lookups.loggers.get(input.loggerId);
  if (logger === undefined || input.timeMs === null || !input.codes.includes('future_timestamp')) return [];
  return evaluateClock(ctx, input.loggerId, logger, input.timeMs, input.arrivalMs);
}
