import type { AlarmTransition } from '../types.js';
import { evaluate, type EngineContext } from './evaluate.js';
import { healthDescriptor, healthEvaluation } from './health-common.js';
import { silence, silenceLimitMs } from './no-data.js';

/**
 * No-data watchdog on a tick: every configured logger silent for missing_after_intervals x its
 * expected interval raises no_data. A logger never heard from is silent since the first tick.
 * Mutates `ctx.state`.
 */
export function evaluateSilence(ctx: EngineContext, nowMs: number): AlarmTransition[] {
  ctx.state.startMs ??= nowMs;
  const cfg = ctx.cfg.health.no_data;
  if (!cfg.enabled) return [];
  const out: AlarmTransition[] = [];
  for (const [loggerId, logger] of ctx.lookups.loggers) {
    const last = ctx.state.loggerLastMs[loggerId] ?? ctx.state.startMs;
    const limitMs = silenceLimitMs(logger.expectedIntervalS, cfg.missing_after_intervals);
    const s = silence(nowMs, last, limitMs);
    if (!s.silent) continue; // only a frame (evidence) clears no-data
    const d = healthDescriptor(ctx, 'no_data', `l:${loggerId}`, { kind: 'logger', loggerId }, logger.zone,
      logger.location, 'silence_s', 's');
    out.push(...evaluate(ctx, d, healthEvaluation(ctx, 'no_data', true, nowMs, s.silentS, limitMs / 1000)));
  }
  return out;
}
