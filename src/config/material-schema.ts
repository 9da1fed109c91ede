import { z } from 'zod';

/**
 * Materials. Moduli in MPa, expansion coefficients in 1/degC, capacities in MPa.
 * Material axes 1, 2, 3 are the axes x, y, z of a group that uses the material, unless the group
 * gives the material's orientation (`material_angle_deg` on plane and single groups,
 * `material_rotation_deg` on solid clusters; src/config/compile-group.ts rotates the properties).
 */
const id = z.string().min(1).regex(/^[A-Za-z0-9_.-]+$/, 'use letters, digits, "_", "-" or "."');
const positive = z.number().positive();
const alphaPerDegC = z.number().min(-1e-4).max(1e-4);

const capacities = {
  /** Yield strength f_y (steel): von Mises ratio denominator. */
  yield_strength_MPa: positive.optional(),
  /** Mean tensile strength f_ctm (concrete): principal tension ratio denominator. */
  tensile_strength_MPa: positive.optional(),
  /** Mean compressive strength f_cm (concrete): principal compression ratio denominator. */
  compressive_strength_MPa: positive.optional(),
};

export const IsotropicMaterialSchema = z.strictObject({
  id,
  kind: z.literal('isotropic'),
  description: z.string().optional(),
  E_MPa: positive,
  /** Physically admissible range for an isotropic solid: -1 < nu < 0.5. */
  nu: z.number().gt(-1, 'Poisson ratio must be > -1').lt(0.5, 'Poisson ratio must be < 0.5 (0.5 is incompressible: no finite stiffness)'),
  alpha_per_degC: alphaPerDegC,
  ...capacities,
});

export const OrthotropicMaterialSchema = z.strictObject({
  id,
  kind: z.literal('orthotropic'),
  description: z.string().optional(),
  E1_MPa: positive, E2_MPa: positive, E3_MPa: positive,
  nu12: z.number(), nu13: z.number(), nu23: z.number(),
  G12_MPa: positive, G13_MPa: positive, G23_MPa: positive,
  /** Along material axes 1, 2, 3. */
  alpha_per_degC: z.tuple([alphaPerDegC, alphaPerDegC, alphaPerDegC]),
  ...capacities,
});

const row6 = z.tuple([z.number(), z.number(), z.number(), z.number(), z.number(), z.number()]);

export const AnisotropicMaterialSchema = z.strictObject({
  id,
  kind: z.literal('stiffness_matrix'),
  description: z.string().optional(),
  /** Full 6x6 stiffness in Voigt order xx, yy, zz, yz, xz, xy (engineering shear strains), MPa. */
  stiffness_MPa: z.tuple([row6, row6, row6, row6, row6, row6]),
  /** Normal components (1, 2, 3), or all six in Voigt order with engineering shear (an expansion given in rotated axes). */
  alpha_per_degC: z.union([
    z.tuple([alphaPerDegC, alphaPerDegC, alphaPerDegC]),
    z.tuple([alphaPerDegC, alphaPerDegC, alphaPerDegC, alphaPerDegC, alphaPerDegC, alphaPerDegC]),
  ]),
  ...capacities,
});

export const MaterialSchema = z.discriminatedUnion('kind', [
  IsotropicMaterialSchema,
  OrthotropicMaterialSchema,
  AnisotropicMaterialSchema,
]);
export type MaterialConfig = z.infer<typeof MaterialSchema>;
export { id as IdSchema };
