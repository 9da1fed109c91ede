import { z } from 'zod';
import { IdSchema } from './material-schema.js';

/** Stress quantities that are not fatigue quantities, and why (the refusal says it). */
const NOT_FATIGUE: Record<string, string> = {
  von_mises: 'von Mises is not a fatigue quantity: it is never negative and loses the sign of the stress, so a reversal from tension to compression shows as two small ranges instead of one large one; use `direction` (the stress along a direction, at an angle) or `principal` (a principal stress with its sign)',
  tresca: 'Tresca is not a fatigue quantity: it is never negative and loses the sign of the stress; use `direction` or `principal` (or `shear` on a plane for a shear detail)',
};

/** Which stress a detail counts, computed from the group's stress tensor. */
export const FatigueQuantitySchema = z.unknown().superRefine((v, ctx) => {
  const kind = typeof v === 'object' && v !== null ? (v as { kind?: unknown }).kind : undefined;
  if (typeof kind === 'string' && kind in NOT_FATIGUE) ctx.addIssue({ code: 'custom', path: ['kind'], message: NOT_FATIGUE[kind] });
}).pipe(z.discriminatedUnion('kind', [
  /** Normal stress along a direction in the group's plane, counter-clockwise from its x axis (a single gauge: along it, angle 0). */
  z.strictObject({ kind: z.literal('direction'), angle_deg: z.number().min(-360).max(360).default(0) }),
  /** Plane groups: principal 1 (the larger, with its sign) or principal 2 (the smaller). */
  z.strictObject({ kind: z.literal('principal'), which: z.union([z.literal(1), z.literal(2)]) }),
  /** Shear stress on the plane whose normal is at `angle_deg` from the group's x axis (shear details). */
  z.strictObject({ kind: z.literal('shear'), angle_deg: z.number().min(-360).max(360).default(0) }),
]));

export const FatigueDetailSchema = z.strictObject({
  id: IdSchema,
  /** Where it is, in words a crew can find. */
  location: z.string().min(1).optional(),
  /** The group whose results give the stress; or `gauge`: the single-gauge group of that gauge. */
  group: IdSchema.optional(),
  gauge: IdSchema.optional(),
  stress: FatigueQuantitySchema,
  /** EN 1993-1-9 detail category: delta_sigma_C (direct) or delta_tau_C (shear), MPa at 2e6 cycles. */
  category_MPa: z.number(),
  gamma_Ff: z.number().min(1).default(1),
  gamma_Mf: z.number().min(1).default(1.35),
  /** Measured stress to hot-spot stress, where the gauge is not at the hot spot. */
  stress_concentration_factor: z.number().min(1).default(1),
  /** Reversals of the measured stress smaller than this are ignored, MPa. */
  gate_MPa: z.number().min(0).default(2),
  histogram: z.strictObject({ bin_width_MPa: z.number().positive().default(5), bins: z.number().int().min(1).max(1000).default(60) })
    .default({ bin_width_MPa: 5, bins: 60 }),
});

export const FatigueConfigSchema = z.strictObject({
  details: z.array(FatigueDetailSchema).min(1),
  /** Trusted results of a detail further apart than this (logger time) break its sequence, s. */
  gap_s: z.number().positive().default(10),
  /** Figures written to the database (`sw_fatigue`) and the state file every this much pipeline time, s. */
  write_interval_s: z.number().positive().default(300),
  /** Window of the recent damage rate (remaining life, the rate alarm), hours of monitored time. */
  rate_window_h: z.number().positive().max(24 * 366).default(24),
});

export type FatigueConfig = z.infer<typeof FatigueConfigSchema>;
export type FatigueDetailConfig = z.infer<typeof FatigueDetailSchema>;
