import type { AlarmsConfig } from '../schema.js';
import type { AlarmLookups, AlarmTransition } from '../types.js';
import { debounce, newDebounce } from './debounce.js';
import { applyCondition, type AlarmDescriptor } from './lifecycle.js';
import type { FlappingRule } from './flapping.js';
import type { EngineState, KeyState } from './state.js';

/** What every detector needs: configuration, lookups and the state it mutates. */
export interface EngineContext {
  cfg: AlarmsConfig;
  lookups: AlarmLookups;
  state: EngineState;
  flapping: FlappingRule;
  /** Level name -> index in cfg.levels. */
  levelIndex: ReadonlyMap<string, number>;
}

/** The key's state, created on first use for a detector with `levels` levels. Mutates `ctx.state`. */
export function keyState(ctx: EngineContext, key: string, levels: number): KeyState {
  let ks = ctx.state.keys[key];
  if (ks === undefined) {
    ks = { debounce: newDebounce(levels), prevRaw: 0, seq: 0, clearsMs: [], quietSinceMs: null };
    ctx.state.keys[key] = ks;
  }
  return ks;
}

/**
 * An evaluation with raw level 0 that can change nothing but the shown value, done without its
 * descriptor: the common case (most readings and results raise nothing), which builds nothing.
 * It applies when the key is steady at zero (the condition absent before, nothing confirmed, every
 * level's absence already dated) and has no alarm, or only one that is cleared, unacknowledged and
 * not flapping, whose value and trend it updates as `evaluate` would. Returns false (nothing done)
 * otherwise: the caller then calls `evaluate`. Mutates `ctx.state`.
 */
export function settledAtZero(ctx: EngineContext, key: string, ks: KeyState | undefined, value: number | null, trendPerS: number | null): boolean {
  const k = ks ?? ctx.state.keys[key];
  if (k === undefined) return true;
  if (k.prevRaw !== 0 || k.debounce.confirmed !== 0) return false;
  const above = k.debounce.aboveSinceMs, below = k.debounce.belowSinceMs;
  for (let i = 1; i < above.length; i++) if (above[i] !== null || below[i] === null) return false;
  const alarm = ctx.state.alarms[key];
  if (alarm === undefined) return true;
  if (alarm.state !== 'cleared_unacknowledged' || alarm.flapping) return false;
  alarm.value = value;
  alarm.trendPerS = trendPerS;
  return true;
}

/** One detector evaluation, before delays. */
export interface RawEvaluation {
  /** Raw level: 0 = condition absent, i = the i-th (1-based) of the detector's levels. */
  raw: number;
  tMs: number;
  onDelayMs: number;
  offDelayMs: number;
  /** Level name for each detector level (index 0 = detector level 1). */
  levelNames: readonly string[];
  value: number | null;
  /** The limit for a detector level (1-based). */
  limitOf: (level: number) => number | null;
  trendPerS: number | null;
}

/**
 * Debounce the raw level and apply it to the key's alarm. Keys that never saw their condition
 * cost nothing. Mutates `ctx.state`; returns the transitions.
 */
export function evaluate(ctx: EngineContext, d: AlarmDescriptor, e: RawEvaluation, ks?: KeyState): AlarmTransition[] {
  if (ks === undefined && e.raw === 0 && ctx.state.keys[d.key] === undefined) return [];
  const k = ks ?? keyState(ctx, d.key, e.levelNames.length);
  const confirmed = debounce(k.debounce, e.raw, e.tMs, e.onDelayMs, e.offDelayMs);
  const onset = e.raw > 0 && k.prevRaw === 0;
  k.prevRaw = e.raw;
  const name = confirmed > 0 ? e.levelNames[confirmed - 1] : null;
  return applyCondition(ctx.lookups.structureId, ctx.flapping, ctx.state, k, d, {
    level: name === null ? null : { name, index: ctx.levelIndex.get(name) ?? 0 },
    value: e.value,
    limit: confirmed > 0 ? e.limitOf(confirmed) : null,
    trendPerS: e.trendPerS,
    atMs: e.tMs,
    onset,
  });
}
