import { z } from 'zod';
import { StructuralRuleSchema } from './schema-rules.js';
import { HealthConfigSchema, HEALTH_CHECKS } from './schema-health.js';
import {
  AcknowledgementSchema,
  EscalationSchema,
  FlappingSchema,
  RecipientSchema,
  RouteSchema,
} from './schema-routing.js';

export * from './schema-rules.js';
export * from './schema-health.js';
export * from './schema-routing.js';

/**
 * The `alarms` section of a structure configuration. Cross-field checks (level names exist,
 * thresholds ordered, ids unique, routes name known recipients) report every problem at once,
 * each with its path.
 */
export const AlarmsConfigSchema = z
  .strictObject({
    /** `false` or absent: alarms on (the key exists so `AlarmsSectionSchema` can tell the two forms apart). */
    disabled: z.literal(false).optional(),
    /** Level names, least severe first. The names are data. */
    levels: z.array(z.string().min(1)).min(1),
    rules: z.array(StructuralRuleSchema).default([]),
    health: HealthConfigSchema,
    /** Trend shown with each alarm: least-squares slope over this many seconds. */
    trend_window_s: z.number().finite().positive().default(300),
    flapping: FlappingSchema.prefault({}),
    recipients: z.array(RecipientSchema).default([]),
    routes: z.array(RouteSchema).default([]),
    escalation: EscalationSchema.prefault({}),
    acknowledgement: AcknowledgementSchema,
  })
  .superRefine((cfg, ctx) => {
    const levels = new Set(cfg.levels);
    const issue = (path: (string | number)[], message: string): void => {
      ctx.addIssue({ code: 'custom', path, message });
    };
    if (levels.size !== cfg.levels.length) issue(['levels'], 'level names must be unique');
    const ruleIds = new Set<string>();
    cfg.rules.forEach((rule, i) => {
      if (ruleIds.has(rule.id)) issue(['rules', i, 'id'], `duplicate rule id "${rule.id}"`);
      ruleIds.add(rule.id);
      if ((HEALTH_CHECKS as readonly string[]).includes(rule.id)) {
        issue(['rules', i, 'id'], `rule id "${rule.id}" is reserved for a health check`);
      }
      let prevLevel = -1;
      let prevValue = Number.NaN;
      rule.thresholds.forEach((t, j) => {
        const at = ['rules', i, 'thresholds', j];
        const li = cfg.levels.indexOf(t.level);
        if (li < 0) issue([...at, 'level'], `unknown level "${t.level}" (levels: ${cfg.levels.join(', ')})`);
        else if (li <= prevLevel) issue([...at, 'level'], 'thresholds must name levels in increasing severity');
        prevLevel = Math.max(prevLevel, li);
        const v = 'value' in t ? t.value : 'rate_per_s' in t ? t.rate_per_s : 'damage_per_day' in t ? t.damage_per_day : t.fraction;
        const increasing = rule.kind !== 'limit' || rule.direction === 'above';
        if (j > 0 && (increasing ? v <= prevValue : v >= prevValue)) {
          issue([...at], increasing ? 'threshold values must increase with severity' : 'thresholds below must decrease with severity');
        }
        prevValue = v;
      });
    });
    if (!levels.has(cfg.health.level)) issue(['health', 'level'], `unknown level "${cfg.health.level}"`);
    for (const check of HEALTH_CHECKS) {
      const level = cfg.health[check].level;
      if (level !== undefined && !levels.has(level)) issue(['health', check, 'level'], `unknown level "${level}"`);
    }
    const recipientIds = new Set<string>();
    cfg.recipients.forEach((r, i) => {
      if (recipientIds.has(r.id)) issue(['recipients', i, 'id'], `duplicate recipient id "${r.id}"`);
      recipientIds.add(r.id);
    });
    cfg.routes.forEach((route, i) => {
      route.match.level?.forEach((l, j) => {
        if (!levels.has(l)) issue(['routes', i, 'match', 'level', j], `unknown level "${l}"`);
      });
      route.tiers.forEach((tier, t) =>
        tier.forEach((id, k) => {
          if (!recipientIds.has(id)) issue(['routes', i, 'tiers', t, k], `unknown recipient "${id}"`);
        }),
      );
    });
  });

/**
 * `alarms: { disabled: true }`: a structure watched without any alarm, said on purpose. The live
 * job refuses a structure with no `alarms` section at all, since it would raise nothing, health
 * alarms included, and say nothing; disabled, it starts and warns (log, presence, `status`).
 */
export const AlarmsDisabledSchema = z.strictObject({ disabled: z.literal(true) }, {
  error: (issue) => (issue.code === 'unrecognized_keys'
    ? `disabled: true switches every alarm off and takes no other key (found ${issue.keys.map((k) => `"${k}"`).join(', ')}): remove disabled, or the rest`
    : undefined),
});

/** The structure file's `alarms` section: the configuration, or explicitly disabled. */
export const AlarmsSectionSchema = z.discriminatedUnion('disabled', [AlarmsDisabledSchema, AlarmsConfigSchema]);

/** The validated `alarms` configuration (defaults filled in). */
export type AlarmsConfig = z.infer<typeof AlarmsConfigSchema>;
/** The `alarms` configuration as written in the file (defaults optional). */
export type AlarmsConfigInput = z.input<typeof AlarmsConfigSchema>;
