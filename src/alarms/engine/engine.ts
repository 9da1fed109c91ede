import type { AlarmsConfig } from '../schema.js';
import type { AckRefusal, Alarm, AlarmInput, AlarmLookups, AlarmTransition } from '../types.js';
import { tierCount } from '../routing/match.js';
import { acknowledge } from './acknowledge.js';
import { escalate } from './escalation.js';
import type { EngineContext } from './evaluate.js';
import { evaluateComponent } from './component-health.js';
import { evaluateFlags } from './health-flags.js';
import { evaluateFrame } from './health-channels.js';
import { evaluateRefused } from './clock-health.js';
import { evaluateSequence } from './sequence-health.js';
import { HEALTH_CHECKS } from '../schema.js';
import { newEngineState, type EngineState } from './state.js';
import { parseState, serialiseState } from './state-migration.js';
import { compileRules, evaluateStructural } from './structural.js';
import { evaluateSilence } from './watchdog.js';
import { evaluateRefusals, evaluateRefusalsAt } from './refusal-health.js';
import { evaluateFatigue } from './fatigue-rule.js';

/** What one input produced. */
export interface StepOutput {
  transitions: AlarmTransition[];
  refusals: AckRefusal[];
}

/** The alarm engine: pure (no I/O, no clock), one state machine per (rule or check, subject). */
export interface AlarmEngine {
  /** Consume one input; mutates the engine state. */
  step(input: AlarmInput): StepOutput;
  /** The whole state as JSON text, for the snapshot file. */
  snapshot(): string;
  /** Every alarm not yet closed (active, or cleared but unacknowledged), copies. */
  visibleAlarms(): Alarm[];
  /** Per logger: scans whose `seq` went back or repeated, and counter restarts among them (since the state began). */
  sequenceCounts(): Record<string, { backwards: number; repeated: number; restarts: number }>;
}

/**
 * Build an engine for one structure. `snapshotJson` (from `snapshot()`) restores a previous
 * state, so an alarm raised before a restart is still there; it throws if the snapshot is invalid.
 */
export function createAlarmEngine(cfg: AlarmsConfig, lookups: AlarmLookups, snapshotJson?: string): AlarmEngine {
  const state: EngineState = snapshotJson === undefined ? newEngineState() : parseState(snapshotJson);
  const ctx: EngineContext = {
    cfg, lookups, state,
    flapping: { maxCycles: cfg.flapping.max_cycles, windowMs: cfg.flapping.window_s * 1000 },
    levelIndex: new Map(cfg.levels.map((l, i) => [l, i])),
  };
  const rules = compileRules(cfg.rules);
  releaseOrphans(cfg, state);
  const escalateAfterMs = cfg.escalation.after_s * 1000;
  const tiers = (a: Alarm): number => tierCount(cfg, a);
  const permissions = cfg.acknowledgement.allowed_users;

  function step(input: AlarmInput): StepOutput {
    switch (input.type) {
      case 'result': {
        const r = input.result;
        if (r.structureId !== lookups.structureId) return { transitions: [], refusals: [] };
        const transitions = evaluateFlags(ctx, r);
        // A doubtful result neither raises nor clears a structural alarm.
        if (r.flags.length === 0) transitions.push(...evaluateStructural(ctx, rules, r));
        return { transitions, refusals: [] };
      }
      case 'frame': {
        const f = input.frame;
        const logger = lookups.loggers.get(f.loggerId);
        if (f.structureId !== lookups.structureId || logger === undefined) return { transitions: [], refusals: [] };
        return { transitions: [...evaluateFrame(ctx, f), ...evaluateSequence(ctx, f, logger)], refusals: [] };
      }
      case 'refused':
        return { transitions: [...evaluateRefused(ctx, input), ...evaluateRefusals(ctx, input)], refusals: [] };
      case 'tick': {
        const transitions = evaluateSilence(ctx, input.nowMs);
        transitions.push(...evaluateRefusalsAt(ctx, input.nowMs));
        transitions.push(...escalate(state, input.nowMs, escalateAfterMs, tiers));
        return { transitions, refusals: [] };
      }
      case 'ack': {
        const r = acknowledge(state, input, permissions);
        return 'transition' in r ? { transitions: [r.transition], refusals: [] } : { transitions: [], refusals: [r.refusal] };
      }
      case 'component':
        return { transitions: evaluateComponent(ctx, input), refusals: [] };
      case 'fatigue':
        return { transitions: evaluateFatigue(ctx, rules.fatigue, input), refusals: [] };
    }
  }

  return {
    step,
    snapshot: () => serialiseState(state),
    visibleAlarms: () => Object.values(state.alarms).map((a) => structuredClone(a)),
    sequenceCounts: () => Object.fromEntries(Object.entries(state.sequences)
      .map(([id, s]) => [id, { backwards: s.backwards, repeated: s.repeated, restarts: s.restarts }])),
  };
}

/**
 * A restored alarm whose rule or health check is no longer configured can never be cleared by
 * evidence: it becomes cleared_unacknowledged, visible until someone acknowledges it (which
 * closes it). Mutates `state.alarms`.
 */
function releaseOrphans(cfg: AlarmsConfig, state: EngineState): void {
  const live = new Set<string>([...cfg.rules.map((r) => r.id), ...HEALTH_CHECKS.filter((c) => cfg.health[c].enabled)]);
  for (const a of Object.values(state.alarms)) {
    if (!live.has(a.ruleId) && a.state !== 'cleared_unacknowledged') a.state = 'cleared_unacknowledged';
  }
}
