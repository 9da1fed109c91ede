import type { LoggerFrame } from '../../model/raw-message.js';
import type { AlarmTransition, LoggerInfo } from '../types.js';
import { evaluate, settledAtZero, type EngineContext } from './evaluate.js';
import { alarmKey, loggerSubjectKey } from './key-cache.js';
import { healthDescriptor, healthEvaluation } from './health-common.js';
import { newSequenceState, sequenceStep } from './sequence.js';

const HOUR_MS = 3_600_000;

/**
 * Counts a logger's `seq` going back or repeating (always, for the status), and raises
 * sequence_restart while its counter restarted more than max_per_hour times in the last hour.
 * A scan without `seq` says nothing. Mutates `ctx.state`.
 */
export function evaluateSequence(ctx: EngineContext, f: LoggerFrame, logger: LoggerInfo): AlarmTransition[] {
  if (f.seq === null) return [];
  const check = ctx.cfg.health.sequence_restart;
  const keep = check.max_per_hour + 1; // enough to tell "more than the limit"
  const s = ctx.state.sequences[f.loggerId];
  if (s === undefined) {
    ctx.state.sequences[f.loggerId] = newSequenceState(f.seq, f.timeMs);
    return [];
  }
  sequenceStep(s, f.seq, f.timeMs, f.arrivalMs, HOUR_MS, keep);
  if (!check.enabled) return [];
  const inLastHour = s.restartsMs.length;
  const present = inLastHour > check.max_per_hour;
  const subjectKey = loggerSubjectKey(f.loggerId);
  if (!present && settledAtZero(ctx, alarmKey('sequence_restart', subjectKey), undefined, inLastHour, null)) return [];
  const d = healthDescriptor(ctx, 'sequence_restart', subjectKey, { kind: 'logger', loggerId: f.loggerId },
    logger.zone, logger.location, 'seq_restarts_per_hour', '1/h');
  return evaluate(ctx, d, healthEvaluation(ctx, 'sequence_restart', present, f.arrivalMs, inLastHour,
    check.max_per_hour));
}
