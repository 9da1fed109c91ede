import type { CompiledGroup } from '../src/config/compile.js';
import { GROUP_PLANE, GROUP_SOLID } from '../src/mechanics/group-model.js';
import type { DeckTemperatures } from './thermal-model.js';
import type { GirderEffects, LoadEffects } from './traffic.js';

/**
 * True stress of every group of the invented deck, in the group's own space (plane [sx, sy, txy],
 * solid Voigt xx, yy, zz, yz, xz, xy, single [sigma], MPa). Group axes: x along the bridge; plane
 * groups on a web have y vertical, on a flange y transverse; the slab cluster has y transverse and
 * z vertical. Section factors (MPa per MN m or per MN) are invented for the scenario.
 */
const FLANGE_MPA_PER_MNM = 22; // 1 / bottom-flange section modulus 0.045 m^3
const WEB_MPA_PER_MNM = 15; // web, 300 mm above the flange: nearer the neutral axis
const WEB_SHEAR_MPA_PER_MN = 64; // 1 / web area 0.0156 m^2
const SLAB_XX_MPA_PER_MNM = -0.45; // slab in compression under sagging (both girders' moment)
const SLAB_YY_MPA_PER_MNM = -0.12;
const SLAB_XZ_MPA_PER_MN = 0.6;
/** Slab warmer than steel pulls the steel bottom fibres into tension (composite action), MPa/degC. */
const STEEL_DIFFERENTIAL_MPA_PER_DEGC = 0.35;
/** Non-linear slab gradient: self-equilibrating stress in the lower layer, MPa per degC top-bottom. */
const SLAB_GRADIENT_MPA_PER_DEGC = 0.06;

export type Placement =
  | { kind: 'web' | 'flange'; girder: 'north' | 'south' }
  | { kind: 'slab' }
  | { kind: 'none' };

/** Where a group sits, from its id (the example configuration's naming: web-, flange-, slab-; north/south). */
export function placementOf(groupId: string): Placement {
  const girder = groupId.includes('south') ? 'south' : 'north';
  if (groupId.startsWith('web')) return { kind: 'web', girder };
  if (groupId.startsWith('flange')) return { kind: 'flange', girder };
  if (groupId.startsWith('slab')) return { kind: 'slab' };
  return { kind: 'none' };
}

/** State of the restrained-expansion episode: temperatures when the bearing seized, and the fraction restrained. */
export interface RestraintState { active: boolean; fraction: number; steelSeizeC: number; slabSeizeC: number }

/**
 * Writes the group's true stress (6-vector in Voigt order, MPa) into out6, then returns the
 * group-space vector length: callers take components [0,1,5] (plane), all six (solid) or [0] (single).
 */
export function trueStress6(
  p: Placement, fx: LoadEffects, temps: DeckTemperatures, restraint: RestraintState, E_MPa: number, alpha: number, out6: Float64Array,
): Float64Array {
  out6.fill(0);
  const slabMean = 0.5 * (temps.slabTop + temps.slabBottom);
  if (p.kind === 'web' || p.kind === 'flange') {
    const g: GirderEffects = fx[p.girder];
    const steelC = p.girder === 'north' ? temps.steelNorth : temps.steelSouth;
    const differential = STEEL_DIFFERENTIAL_MPA_PER_DEGC * (slabMean - steelC);
    const restrained = restraint.active ? -restraint.fraction * E_MPa * alpha * Math.max(0, steelC - restraint.steelSeizeC) : 0;
    if (p.kind === 'flange') {
      const sx = FLANGE_MPA_PER_MNM * g.momentMid_MNm + differential + restrained;
      out6[0] = sx;
      out6[1] = 0.04 * sx; // a little transverse stress from the flange's Poisson restraint by the web
      out6[5] = 0.5 * WEB_SHEAR_MPA_PER_MN * 0.05 * g.shearMid_MN;
    } else {
      out6[0] = WEB_MPA_PER_MNM * g.momentPier_MNm + 0.6 * differential + restrained;
      out6[1] = -0.05 * WEB_SHEAR_MPA_PER_MN * Math.abs(g.shearPier_MN); // bearing spread, compressive
      out6[5] = WEB_SHEAR_MPA_PER_MN * g.shearPier_MN;
    }
  } else if (p.kind === 'slab') {
    const m = fx.north.momentMid_MNm + fx.south.momentMid_MNm;
    const v = fx.north.shearMid_MN + fx.south.shearMid_MN;
    const gradient = SLAB_GRADIENT_MPA_PER_DEGC * (temps.slabTop - temps.slabBottom);
    const restrained = restraint.active ? -restraint.fraction * E_MPa * alpha * Math.max(0, slabMean - restraint.slabSeizeC) : 0;
    out6[0] = SLAB_XX_MPA_PER_MNM * m + gradient + restrained;
    out6[1] = SLAB_YY_MPA_PER_MNM * m + gradient;
    out6[2] = 0.02 * SLAB_YY_MPA_PER_MNM * m;
    out6[3] = 0.1 * SLAB_XZ_MPA_PER_MN * v;
    out6[4] = SLAB_XZ_MPA_PER_MN * v;
    out6[5] = 0.05 * SLAB_XX_MPA_PER_MNM * m;
  }
  return out6;
}

/** The group-space stress vector (new array) from a Voigt 6-vector. */
export function groupStress(group: CompiledGroup, s6: Float64Array): number[] {
  const kind = group.model.kind;
  if (kind === GROUP_PLANE) return [s6[0], s6[1], s6[5]];
  if (kind === GROUP_SOLID) return Array.from(s6);
  return [s6[0]];
}
