import { concatMap, defer, from, map, Observable, type OperatorFunction, type SchedulerLike, interval } from 'rxjs';
import type { AlarmsConfig } from './schema.js';
import type { AckRefusal, AlarmInput, AlarmLookups, AlarmTransition, Tick } from './types.js';
import { createAlarmEngine, type AlarmEngine } from './engine/engine.js';
import { syncFlatMap } from './sync-flat-map.js';

/** One input's outcome: its transitions and refusals, and the engine state right after. */
export interface AlarmBatch {
  input: AlarmInput;
  transitions: AlarmTransition[];
  refusals: AckRefusal[];
  /** JSON snapshot of the engine state after this input (computed on demand). */
  snapshot: () => string;
}

export interface AlarmOperatorOptions {
  /** A snapshot (from a previous run's `AlarmBatch.snapshot()`) to restore at subscription. */
  snapshotJson?: string;
  /** Called with the engine when it is built (each subscription builds its own). */
  onEngine?: (engine: AlarmEngine) => void;
}

/**
 * Alarm engine as an operator emitting one batch per input that changed something (any
 * transition or refusal). Each subscription has its own engine. Persist the batch's snapshot
 * before acting on it to lose nothing on restart.
 */
export function alarmBatches(
  cfg: AlarmsConfig,
  lookups: AlarmLookups,
  options: AlarmOperatorOptions = {},
): OperatorFunction<AlarmInput, AlarmBatch> {
  return (source) =>
    defer(() => {
      const engine = createAlarmEngine(cfg, lookups, options.snapshotJson);
      options.onEngine?.(engine);
      const none: AlarmBatch[] = [];
      const snapshot = () => engine.snapshot();
      return source.pipe(
        syncFlatMap((input) => {
          const out = engine.step(input);
          if (out.transitions.length === 0 && out.refusals.length === 0) return none;
          return [{ input, ...out, snapshot }];
        }),
      );
    });
}

/** Alarm engine as an operator: inputs in, transitions out (refusals dropped: use alarmBatches). */
export function alarms(
  cfg: AlarmsConfig,
  lookups: AlarmLookups,
  options: AlarmOperatorOptions = {},
): OperatorFunction<AlarmInput, AlarmTransition> {
  return (source) => source.pipe(alarmBatches(cfg, lookups, options), concatMap((b) => from(b.transitions)));
}

/** Ticks every periodMs on the injected scheduler, stamped with the scheduler's clock. */
export function alarmTicks(periodMs: number, scheduler: SchedulerLike): Observable<Tick> {
  return interval(periodMs, scheduler).pipe(map((): Tick => ({ type: 'tick', nowMs: scheduler.now() })));
}
