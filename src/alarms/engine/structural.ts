import type { GroupResult } from '../../model/result.js';
import type { FatigueRule, ResultRule, StructuralRule } from '../schema.js';
import type { AlarmTransition } from '../types.js';
import { unitOfQuantity } from '../units.js';
import { compileLimit, limitLevel, limitValue, type CompiledLimit } from './limit-rule.js';
import { rateLevel, rateLimit, rateStep } from './rate-rule.js';
import { newSampleWindow, pushSample, slopePerS } from './sample-window.js';
import { evaluate, keyState, settledAtZero, type EngineContext, type RawEvaluation } from './evaluate.js';
import type { KeyState } from './state.js';
import { alarmKey, groupSubjectKey } from './key-cache.js';
import type { AlarmDescriptor } from './lifecycle.js';

/** Whether a rule's scope covers a group. */
export function inScope(rule: ResultRule, groupId: string, zone: string): boolean {
  const s = rule.scope;
  return s.kind === 'structure' || (s.kind === 'zone' ? s.zone === zone : s.group_ids.includes(groupId));
}

/** Structural rules compiled once at engine creation: those judged on results, and the fatigue rules. */
export interface CompiledRules {
  rules: ResultRule[];
  limits: Map<string, CompiledLimit>;
  fatigue: FatigueRule[];
}

export function compileRules(rules: readonly StructuralRule[]): CompiledRules {
  const limits = new Map<string, CompiledLimit>();
  for (const r of rules) if (r.kind === 'limit') limits.set(r.id, compileLimit(r));
  const isResultRule = (r: StructuralRule): r is ResultRule => r.kind === 'limit' || r.kind === 'rate';
  return { rules: rules.filter(isResultRule), limits, fatigue: rules.filter((r): r is FatigueRule => !isResultRule(r)) };
}

/**
 * Evaluate every structural rule covering the result's group. Call only with unflagged results:
 * a flagged result is no evidence either way. Mutates `ctx.state`.
 */
export function evaluateStructural(ctx: EngineContext, compiled: CompiledRules, r: GroupResult): AlarmTransition[] {
  const out: AlarmTransition[] = [];
  const group = ctx.lookups.groups.get(r.groupId);
  const trendMs = ctx.cfg.trend_window_s * 1000;
  for (const rule of compiled.rules) {
    const value = r.values[rule.quantity];
    if (value === undefined || !inScope(rule, r.groupId, r.zone)) continue;
    const subjectKey = groupSubjectKey(r.groupId);
    const key = alarmKey(rule.id, subjectKey);
    const ks = keyState(ctx, key, rule.thresholds.length);
    // Judged already (a redelivered scan) or older than what was: at-least-once delivery must not raise twice.
    if (judgedAlready(ks, r)) continue;
    ks.judgedToMs = r.timeMs;
    if (r.seq === null) delete ks.judgedSeq;
    else ks.judgedSeq = r.seq;
    ks.trend ??= newSampleWindow();
    pushSample(ks.trend, r.timeMs, value, trendMs, trendMs / 120);
    let raw: number;
    let measured: number;
    if (rule.kind === 'limit') {
      raw = limitLevel(compiled.limits.get(rule.id)!, value, ks.debounce.confirmed);
      measured = value;
    } else {
      const slope = rateStep(rule, ks, r.timeMs, value);
      if (slope === null) continue; // too little history: no evidence either way
      raw = rateLevel(rule, slope, ks.debounce.confirmed);
      measured = slope;
    }
    // Below every limit with nothing raised (or only a cleared alarm): nothing built.
    if (raw === 0 && settledAtZero(ctx, key, ks, measured, ctx.state.alarms[key] === undefined ? null : slopePerS(ks.trend, trendMs / 10))) continue;
    out.push(...evaluate(ctx, structuralDescriptor(rule, r, subjectKey, key, group?.location), structuralEvaluation(compiled, rule, ks, r.timeMs, raw, measured, trendMs), ks));
  }
  return out;
}

/** At or before the latest result judged for the key; at its time, new only with a higher seq. */
function judgedAlready(ks: KeyState, r: GroupResult): boolean {
  if (ks.judgedToMs === undefined || r.timeMs > ks.judgedToMs) return false;
  if (r.timeMs < ks.judgedToMs) return true;
  return !(r.seq !== null && ks.judgedSeq !== undefined && r.seq > ks.judgedSeq);
}

function structuralDescriptor(rule: ResultRule, r: GroupResult, subjectKey: string, key: string, location: string | undefined): AlarmDescriptor {
  const units = unitOfQuantity(rule.quantity);
  return {
    key, subjectKey, ruleId: rule.id, alarmClass: 'structural',
    subject: { kind: 'group', groupId: r.groupId }, zone: r.zone, location: location ?? r.groupId,
    quantity: rule.kind === 'rate' ? `rate_of_${rule.quantity}` : rule.quantity,
    units: rule.kind === 'rate' ? `${units}/s` : units, action: rule.action,
  };
}

function structuralEvaluation(compiled: CompiledRules, rule: ResultRule, ks: KeyState, tMs: number, raw: number, value: number, trendMs: number): RawEvaluation {
  const c = rule.kind === 'limit' ? compiled.limits.get(rule.id)! : null;
  return {
    tMs, onDelayMs: rule.on_delay_s * 1000, offDelayMs: rule.off_delay_s * 1000,
    levelNames: rule.thresholds.map((t) => t.level), trendPerS: slopePerS(ks.trend!, trendMs / 10),
    raw, value, limitOf: rule.kind === 'limit' ? (i) => limitValue(c!, i) : (i) => rateLimit(rule, i),
  };
}
