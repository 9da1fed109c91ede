import type { AlarmTransition, RefusedMessage } from '../types.js';
import { evaluate, type EngineContext } from './evaluate.js';
import { healthDescriptor, healthEvaluation } from './health-common.js';

/**
 * A logger whose messages are refused (dead-lettered) more than max_per_window times within
 * window_s raises messages_refused: its data is not reaching the results, which is as bad as
 * silence. Each logger keeps the arrival times of its refusals in the window, at most
 * max_per_window + 1 of them (enough to tell "more than the limit"). Mutates `ctx.state`.
 */
export function evaluateRefusals(ctx: EngineContext, input: RefusedMessage): AlarmTransition[] {
  const check = ctx.cfg.health.messages_refused;
  if (!check.enabled || !ctx.lookups.loggers.has(input.loggerId)) return [];
  const times = (ctx.state.refusals[input.loggerId] ??= []);
  times.push(input.arrivalMs);
  if (times.length > check.max_per_window + 1) times.splice(0, times.length - check.max_per_window - 1);
  return judge(ctx, input.loggerId, input.arrivalMs);
}

/**
 * At a tick: loggers with refusals in their record are judged again, so the alarm clears once the
 * window holds no more than the limit (a logger whose every message is refused sends no good frame
 * that could clear it). Forgets a logger whose window is empty. Mutates `ctx.state`.
 */
export function evaluateRefusalsAt(ctx: EngineContext, nowMs: number): AlarmTransition[] {
  if (!ctx.cfg.health.messages_refused.enabled) return [];
  const out: AlarmTransition[] = [];
  for (const loggerId of Object.keys(ctx.state.refusals)) out.push(...judge(ctx, loggerId, nowMs));
  return out;
}

function judge(ctx: EngineContext, loggerId: string, nowMs: number): AlarmTransition[] {
  const check = ctx.cfg.health.messages_refused;
  const times = ctx.state.refusals[loggerId];
  const since = nowMs - check.window_s * 1000;
  while (times.length > 0 && times[0] <= since) times.shift();
  const logger = ctx.lookups.loggers.get(loggerId);
  if (logger === undefined) return [];
  const d = healthDescriptor(ctx, 'messages_refused', `l:${loggerId}`, { kind: 'logger', loggerId },
    logger.zone, logger.location, 'refused_messages_in_window', 'messages');
  const out = evaluate(ctx, d, healthEvaluation(ctx, 'messages_refused', times.length > check.max_per_window, nowMs, times.length, check.max_per_window));
  if (times.length === 0) delete ctx.state.refusals[loggerId];
  return out;
}
