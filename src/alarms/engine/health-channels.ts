import type { LoggerFrame } from '../../model/raw-message.js';
import type { AlarmTransition, ChannelInfo, LoggerInfo } from '../types.js';
import { evaluate, keyState, settledAtZero, type EngineContext } from './evaluate.js';
import { alarmKey, channelPath, channelSubjectKey, loggerSubjectKey } from './key-cache.js';
import { healthDescriptor, healthEvaluation } from './health-common.js';
import { hampelStep } from './hampel.js';
import { flatlineStep, newFlatline, resetFlatline } from './flatline.js';
import { silence, silenceLimitMs } from './no-data.js';
import { evaluateClock } from './clock-health.js';

/**
 * Per-channel health for one logger frame: missing readings, out-of-range, spikes (Hampel),
 * flatline. Also clears the logger's no-data alarm (its arrival is evidence). Mutates `ctx.state`.
 */
export function evaluateFrame(ctx: EngineContext, f: LoggerFrame): AlarmTransition[] {
  const logger = ctx.lookups.loggers.get(f.loggerId);
  if (logger === undefined) return []; // the decoder refuses unknown loggers before this
  const out: AlarmTransition[] = [];
  ctx.state.loggerLastMs[f.loggerId] = Math.max(ctx.state.loggerLastMs[f.loggerId] ?? f.arrivalMs, f.arrivalMs);
  const loggerKey = loggerSubjectKey(f.loggerId);
  if (ctx.cfg.health.no_data.enabled && !settledAtZero(ctx, alarmKey('no_data', loggerKey), undefined, 0, null)) {
    const d = healthDescriptor(ctx, 'no_data', loggerKey, { kind: 'logger', loggerId: f.loggerId },
      logger.zone, logger.location, 'silence_s', 's');
    out.push(...evaluate(ctx, d, healthEvaluation(ctx, 'no_data', false, f.arrivalMs, 0, null)));
  }
  out.push(...evaluateClock(ctx, f.loggerId, logger, f.timeMs, f.arrivalMs));
  for (const [channelId, ch] of logger.channels) {
    const t = evaluateChannel(ctx, f, logger, channelId, ch, f.values.get(channelId));
    if (t.length > 0) out.push(...t);
  }
  return out;
}

type ChannelCheck = 'channel_missing' | 'out_of_range' | 'spike' | 'flatline';

function channelDescriptor(ctx: EngineContext, check: ChannelCheck, subjectKey: string, f: LoggerFrame, logger: LoggerInfo, channelId: string, ch: ChannelInfo, quantity: string, units: string) {
  return healthDescriptor(ctx, check, subjectKey, { kind: 'channel', loggerId: f.loggerId, channelId, groupId: ch.groupId }, logger.zone, ch.location, quantity, units);
}

function evaluateChannel(
  ctx: EngineContext,
  f: LoggerFrame,
  logger: LoggerInfo,
  channelId: string,
  ch: ChannelInfo,
  reading: number | null | undefined,
): AlarmTransition[] {
  const h = ctx.cfg.health;
  const out: AlarmTransition[] = [];
  const subjectKey = channelSubjectKey(f.loggerId, channelId);
  // Descriptors are built only for an evaluation that can change something (settledAtZero).
  const lastKey = channelPath(f.loggerId, channelId);
  const t = f.timeMs;
  const usable = typeof reading === 'number';
  if (usable) ctx.state.channelLastMs[lastKey] = t;
  const last = (ctx.state.channelLastMs[lastKey] ??= t);
  if (h.channel_missing.enabled) {
    const limitMs = silenceLimitMs(logger.expectedIntervalS, h.channel_missing.missing_after_intervals);
    const s = silence(t, last, limitMs);
    const present = !usable && s.silent;
    if (present || !settledAtZero(ctx, alarmKey('channel_missing', subjectKey), undefined, s.silentS, null)) {
      out.push(...evaluate(ctx, channelDescriptor(ctx, 'channel_missing', subjectKey, f, logger, channelId, ch, 'missing_s', 's'),
        healthEvaluation(ctx, 'channel_missing', present, t, s.silentS, limitMs / 1000)));
    }
  }
  if (!usable) {
    const fk = ctx.state.keys[alarmKey('flatline', subjectKey)];
    if (fk?.flatline !== undefined) resetFlatline(fk.flatline);
    return out;
  }
  const inRange = reading >= ch.validMin && reading <= ch.validMax;
  if (h.out_of_range.enabled && (!inRange || !settledAtZero(ctx, alarmKey('out_of_range', subjectKey), undefined, reading, null))) {
    const limit = reading < ch.validMin ? ch.validMin : ch.validMax;
    out.push(...evaluate(ctx, channelDescriptor(ctx, 'out_of_range', subjectKey, f, logger, channelId, ch, 'reading', ch.unit),
      healthEvaluation(ctx, 'out_of_range', !inRange, t, reading, limit)));
  }
  if (!inRange) return out; // an open-circuit value must not enter the spike or flatline windows
  if (h.spike.enabled) {
    const ks = keyState(ctx, alarmKey('spike', subjectKey), 1);
    ks.hampel ??= { window: [] };
    const minDeviation = h.spike.min_deviation_by_unit[ch.unit] ?? h.spike.min_deviation;
    const v = hampelStep(ks.hampel, reading, h.spike.window_samples, h.spike.k_mads, minDeviation);
    if (v.spike || !settledAtZero(ctx, alarmKey('spike', subjectKey), ks, v.deviation, null)) {
      out.push(...evaluate(ctx, channelDescriptor(ctx, 'spike', subjectKey, f, logger, channelId, ch, 'deviation_from_median', ch.unit),
        healthEvaluation(ctx, 'spike', v.spike, t, v.deviation, v.limit), ks));
    }
  }
  if (h.flatline.enabled) {
    const ks = keyState(ctx, alarmKey('flatline', subjectKey), 1);
    ks.flatline ??= newFlatline();
    const spread = flatlineStep(ks.flatline, t, reading, h.flatline.window_s * 1000);
    if (spread !== null) {
      const flat = spread <= h.flatline.tolerance;
      if (flat || !settledAtZero(ctx, alarmKey('flatline', subjectKey), ks, spread, null)) {
        out.push(...evaluate(ctx, channelDescriptor(ctx, 'flatline', subjectKey, f, logger, channelId, ch, 'spread', ch.unit),
          healthEvaluation(ctx, 'flatline', flat, t, spread, h.flatline.tolerance), ks));
      }
    }
  }
  return out;
}
