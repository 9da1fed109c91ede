import type { GroupResult } from '../../model/result.js';
import type { QualityFlag } from '../../model/quality.js';
import type { HealthCheck } from '../schema.js';
import type { AlarmTransition } from '../types.js';
import { evaluate, settledAtZero, type EngineContext } from './evaluate.js';
import { alarmKey, groupSubjectKey } from './key-cache.js';
import { healthDescriptor, healthEvaluation } from './health-common.js';

/** The health check that explains each quality flag (null: the flag raises none). */
export const FLAG_HEALTH_CHECK: Readonly<Record<QualityFlag, HealthCheck | null>> = {
  temperature_stale: 'temperature_stale',
  temperature_missing: 'temperature_stale',
  element_missing: 'result_incomplete',
  element_out_of_range: 'result_incomplete',
  residual_high: 'residual_high',
  companion_missing: 'result_incomplete',
  underdetermined: 'result_incomplete',
  // The channel's own spike and flat-line alarms explain these (raised from the same readings).
  reading_spike: 'spike',
  reading_suspect: 'spike',
  reading_flatline: 'flatline',
  // An element drifting before one sample's residual passes the limit: the same check, raised earlier.
  residual_drift: 'residual_high',
  // Undecided: noise alone sets it on about 1 % of a redundant group's results, too often for an
  // alarm; the result is doubtful, and residual_drift raises the alarm once the drift is decided.
  residual_rising: null,
};

const FLAG_CHECKS = ['residual_high', 'temperature_stale', 'result_incomplete'] as const;

/** The value shown with each flag alarm. */
const FLAG_QUANTITY: Record<(typeof FLAG_CHECKS)[number], { quantity: 'fit_std_error_micro' | 'temperature_age_s' | null; units: string }> = {
  // The quantity the group's fit_std_error_limit_micro compares.
  residual_high: { quantity: 'fit_std_error_micro', units: 'microstrain' },
  temperature_stale: { quantity: 'temperature_age_s', units: 's' },
  result_incomplete: { quantity: null, units: '' },
};

/**
 * Raise (flag present) or clear (flag absent) the group's flag health alarms for one result.
 * Mutates `ctx.state`.
 */
export function evaluateFlags(ctx: EngineContext, r: GroupResult): AlarmTransition[] {
  const out: AlarmTransition[] = [];
  const subjectKey = groupSubjectKey(r.groupId);
  const flagged = r.flags.length > 0;
  for (const check of FLAG_CHECKS) {
    if (!ctx.cfg.health[check].enabled) continue;
    const present = flagged && r.flags.some((f) => FLAG_HEALTH_CHECK[f] === check);
    const q = FLAG_QUANTITY[check];
    const value = q.quantity === null ? null : (r.values[q.quantity] ?? null);
    // An unflagged result of a group with nothing raised (or only a cleared alarm): no descriptor built.
    if (!present && settledAtZero(ctx, alarmKey(check, subjectKey), undefined, value, null)) continue;
    const flags = r.flags.filter((f) => FLAG_HEALTH_CHECK[f] === check);
    const group = ctx.lookups.groups.get(r.groupId);
    const d = healthDescriptor(
      ctx, check, subjectKey, { kind: 'group', groupId: r.groupId }, r.zone,
      group?.location ?? r.groupId, q.quantity ?? (flags.join('+') || check), q.units,
    );
    out.push(...evaluate(ctx, d, healthEvaluation(ctx, check, present, r.timeMs, value, null)));
  }
  return out;
}
