import { z } from 'zod';
import { IdSchema } from './material-schema.js';
import { renamedTo } from './renamed.js';

const vector3 = z.tuple([z.number(), z.number(), z.number()]);

const PlaneElement = z.strictObject({
  gauge: IdSchema,
  /** Counter-clockwise from the group's x axis, degrees. */
  angle_deg: z.number().min(-360).max(360),
});

const SolidElement = z.strictObject({
  gauge: IdSchema,
  /** Direction in group axes; normalised on load (must not be zero). */
  direction: vector3,
  /** Needed only when the gauge has transverse sensitivity: the in-grid transverse direction. */
  transverse_direction: vector3.optional(),
});

/** How a strain frame is joined to temperature readings taken at other instants. */
export const TemperatureJoinSchema = z.strictObject({
  /** `interpolate` between the readings either side of the frame time; `last` = latest reading at or before it. */
  mode: z.enum(['interpolate', 'last']).default('last'),
  /** A reading older than this (relative to the frame time) is stale. */
  max_age_s: z.number().positive().default(900),
  /** interpolate: how long a frame may wait for the next temperature reading before falling back to `last`. */
  max_wait_s: z.number().min(0).default(0),
  /** true: emit no stress while temperature is missing (the frame is counted and flagged); false: compute and flag. */
  withhold_when_missing: z.boolean().default(false),
});

const common = {
  id: IdSchema,
  material: IdSchema,
  /** Part of the structure, used to route alarms (e.g. `span-1`). */
  zone: IdSchema,
  /** Where it is, in words a crew can find: member, distance from a support, face. */
  location: z.string().min(1),
  temperature_sensors: z.array(IdSchema).default([]),
  temperature: TemperatureJoinSchema.default({ mode: 'last', max_age_s: 900, max_wait_s: 0, withhold_when_missing: false }),
  /**
   * Redundant groups only: flag `residual_high` when the fit's standard error, sqrt(sum r^2 /
   * (elements - unknowns)) = `fit_std_error_micro`, exceeds this, microstrain (30 when not given).
   */
  fit_std_error_limit_micro: z.number().positive().optional(),
  /** Renamed: the old name did not say which residual measure it compares. */
  residual_limit_micro: renamedTo('fit_std_error_limit_micro', 'it compares the standard error of the fit (fit_std_error_micro), not the residual RMS'),
};

/**
 * Plane and single groups: angle from the group's x axis to material axis 1, counter-clockwise
 * about the surface normal z, degrees. Absent: material axes are the group's axes.
 */
const materialAngle = z.number().min(-360).max(360).optional();

/**
 * Solid clusters: the material axes are the group axes rotated about z, then about the new y, then
 * about the newest x (intrinsic z-y'-x'' angles), degrees. Absent: material axes are the group's axes.
 */
const MaterialRotation = z.strictObject({
  about_z: z.number().min(-360).max(360).default(0),
  about_y: z.number().min(-360).max(360).default(0),
  about_x: z.number().min(-360).max(360).default(0),
});

export const PlaneRosetteSchema = z.strictObject({
  ...common,
  kind: z.literal('plane_rosette'),
  elements: z.array(PlaneElement).min(3),
  material_angle_deg: materialAngle,
});

export const SolidClusterSchema = z.strictObject({
  ...common,
  kind: z.literal('solid_cluster'),
  elements: z.array(SolidElement).min(6),
  /** Unstressed companion gauge in the same concrete: its strain is the free strain to subtract. */
  companion_gauge: IdSchema.optional(),
  material_rotation_deg: MaterialRotation.optional(),
});

export const SingleGaugeSchema = z.strictObject({
  ...common,
  kind: z.literal('single'),
  /** Uniaxial stress along the gauge, taken as the group's x axis. */
  elements: z.array(z.strictObject({ gauge: IdSchema })).length(1),
  companion_gauge: IdSchema.optional(),
  material_angle_deg: materialAngle,
});

export const GroupSchema = z.discriminatedUnion('kind', [PlaneRosetteSchema, SolidClusterSchema, SingleGaugeSchema]);
export type GroupConfig = z.infer<typeof GroupSchema>;
