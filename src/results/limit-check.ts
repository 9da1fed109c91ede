import type { AlarmsConfig, RuleScope } from '../alarms/schema.js';
import type { ResultQuantity } from '../model/result.js';

/** One configured limit beside the value it watches, as the calculator shows it. */
export interface LimitStanding {
  rule: string;
  quantity: ResultQuantity;
  direction: 'above' | 'below';
  level: string;
  limit: number;
  /** null when the group does not produce the quantity for this sample (nothing to compare). */
  value: number | null;
  /** Room left before the limit, in the quantity's unit: limit - value (above) or value - limit (below); negative once past. */
  margin: number | null;
  reached: boolean;
}

/** Does a rule's scope include this group? */
export function scopeIncludes(scope: RuleScope, group: { id: string; zone: string }): boolean {
  if (scope.kind === 'structure') return true;
  if (scope.kind === 'zone') return scope.zone === group.zone;
  return scope.group_ids.includes(group.id);
}

/**
 * Every threshold of every limit rule whose scope includes the group, against the sample's values.
 * Rate rules need a window of samples and are not judged from one. Pure.
 */
export function limitStandings(
  alarms: AlarmsConfig | null, group: { id: string; zone: string }, values: Partial<Record<ResultQuantity, number>>,
): LimitStanding[] {
  const rows: LimitStanding[] = [];
  for (const rule of alarms?.rules ?? []) {
    if (rule.kind !== 'limit' || !scopeIncludes(rule.scope, group)) continue;
    const value = values[rule.quantity] ?? null;
    for (const t of rule.thresholds) {
      const margin = value === null ? null : rule.direction === 'above' ? t.value - value : value - t.value;
      rows.push({
        rule: rule.id, quantity: rule.quantity, direction: rule.direction, level: t.level, limit: t.value,
        value, margin, reached: margin !== null && margin <= 0,
      });
    }
  }
  return rows;
}
