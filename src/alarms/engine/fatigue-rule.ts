import type { FatigueRule } from '../schema.js';
import type { AlarmTransition, FatigueDetailSample, FatigueInput } from '../types.js';
import { evaluate, type EngineContext } from './evaluate.js';
import { hysteresisLevel } from './hysteresis.js';
import type { AlarmDescriptor } from './lifecycle.js';

const DAY_S = 86_400;

/** The figure a fatigue rule judges, and its thresholds (ascending) and hysteresis. Pure. */
export function fatigueRuleScale(rule: FatigueRule): { quantity: string; units: string; thresholds: number[]; margin: number } {
  return rule.kind === 'fatigue_damage_rate'
    ? { quantity: 'fatigue_damage_per_day', units: '1/day', thresholds: rule.thresholds.map((t) => t.damage_per_day), margin: rule.clear_margin_per_day }
    : { quantity: 'fatigue_damage', units: '1', thresholds: rule.thresholds.map((t) => t.fraction), margin: rule.clear_margin };
}

function covers(rule: FatigueRule, detailId: string): boolean {
  return rule.scope.kind === 'structure' || rule.scope.detail_ids.includes(detailId);
}

/**
 * Judges every fatigue detail of a snapshot against the fatigue rules covering it: the damage rate
 * (per monitored day over the rate window) or the accumulated damage against ordered thresholds,
 * with hysteresis and on/off delays in logger time. A figure not known yet (no rate before the
 * first monitored stretch, or a rate over less than the rule's `min_window_h`) neither raises nor
 * clears. Mutates `ctx.state`.
 */
export function evaluateFatigue(ctx: EngineContext, rules: readonly FatigueRule[], input: FatigueInput): AlarmTransition[] {
  const out: AlarmTransition[] = [];
  for (const rule of rules) {
    const scale = fatigueRuleScale(rule);
    for (const d of input.details) {
      if (!covers(rule, d.detailId)) continue;
      const value = rule.kind === 'fatigue_damage_rate' ? d.damagePerDay : d.damage;
      if (!Number.isFinite(value)) continue;
      if (rule.kind === 'fatigue_damage_rate' && d.rateWindowS < rule.min_window_h * 3600) continue;
      const key = `${rule.id}|d:${d.detailId}`;
      const confirmed = ctx.state.keys[key]?.debounce.confirmed ?? 0;
      const raw = hysteresisLevel(value, scale.thresholds, scale.margin, confirmed);
      out.push(...evaluate(ctx, descriptor(ctx, rule, scale, key, d), {
        raw, tMs: input.atMs, onDelayMs: rule.on_delay_s * 1000, offDelayMs: rule.off_delay_s * 1000,
        levelNames: rule.thresholds.map((t) => t.level), value, limitOf: (i) => scale.thresholds[i - 1],
        // Accumulated damage: its trend is the damage rate (per second, as every trend).
        trendPerS: rule.kind === 'fatigue_damage' && Number.isFinite(d.damagePerDay) ? d.damagePerDay / DAY_S : null,
      }));
    }
  }
  return out;
}

function descriptor(ctx: EngineContext, rule: FatigueRule, scale: { quantity: string; units: string }, key: string, d: FatigueDetailSample): AlarmDescriptor {
  return {
    key, subjectKey: `d:${d.detailId}`, ruleId: rule.id, alarmClass: 'structural',
    subject: { kind: 'detail', detailId: d.detailId, groupId: d.groupId },
    zone: ctx.lookups.groups.get(d.groupId)?.zone ?? '', location: d.location,
    quantity: scale.quantity, units: scale.units, action: rule.action,
  };
}
