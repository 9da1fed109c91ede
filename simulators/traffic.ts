import type { Rng } from './prng.js';
import type { Scenario } from './scenario.js';
import { momentAt, shearAt } from './influence.js';

/** Invented geometry of the Brannock Mere deck: span length and the two instrumented sections, m. */
export const SPAN_M = 32;
export const MIDSPAN_X_M = 16;
/** Web rosettes sit 1.2 m into span 1 from the pier. */
export const PIER_SECTION_X_M = SPAN_M - 1.2;

export interface Axle { offset_m: number; load_kN: number }

/** One vehicle crossing: enters at enter_s, front axle first; direction +1 from x = 0, -1 from x = 2L. */
export interface Vehicle {
  enter_s: number;
  speed_mps: number;
  direction: 1 | -1;
  /** Share of the vehicle's load carried by the north girder (lane position). */
  northShare: number;
  axles: Axle[];
  heavy: boolean;
}

/** Longest time a vehicle spends on the deck, s: bounds the search for vehicles present. */
export const MAX_CROSSING_S = (2 * SPAN_M + 30) / 6;

/**
 * Vehicles of a run: Poisson arrivals (exponential gaps) of cars and trucks at the scenario's
 * rate, plus the scenario's heavy vehicles; sorted by entry time. Axle sets are invented.
 */
export function generateTraffic(scn: Scenario, rng: Rng): Vehicle[] {
  const out: Vehicle[] = [];
  const rate = scn.traffic.vehicles_per_min / 60;
  let t = 0;
  while (rate > 0) {
    t += -Math.log(1 - rng.uniform()) / rate;
    if (t >= scn.duration_s) break;
    const truck = rng.uniform() < scn.traffic.truck_fraction;
    const scale = 0.7 + 0.6 * rng.uniform();
    const axles: Axle[] = truck
      ? [{ offset_m: 0, load_kN: 60 * scale }, { offset_m: 4.2, load_kN: 90 * scale }, { offset_m: 5.5, load_kN: 90 * scale }]
      : [{ offset_m: 0, load_kN: 8 * scale }, { offset_m: 2.6, load_kN: 7 * scale }];
    const direction = rng.uniform() < 0.5 ? 1 : -1;
    const speed = truck ? 14 + 6 * rng.uniform() : 18 + 7 * rng.uniform();
    out.push({ enter_s: t, speed_mps: speed, direction, northShare: direction === 1 ? 0.35 : 0.65, axles, heavy: false });
  }
  for (const h of scn.heavy_vehicles) {
    // Tractor axle then five equal trailer axles at 1.5 m (an abnormal-load combination).
    const axles: Axle[] = [{ offset_m: 0, load_kN: 0.1 * h.gross_kN }];
    for (let k = 0; k < 5; k++) axles.push({ offset_m: 4 + 1.5 * k, load_kN: 0.18 * h.gross_kN });
    out.push({ enter_s: h.at_s, speed_mps: 8, direction: -1, northShare: 0.6, axles, heavy: true });
  }
  return out.sort((a, b) => a.enter_s - b.enter_s);
}

/** Load effects on one girder: moments MN m, shears MN. */
export interface GirderEffects { momentMid_MNm: number; shearMid_MN: number; momentPier_MNm: number; shearPier_MN: number }
export interface LoadEffects { north: GirderEffects; south: GirderEffects; heavyOnDeck: boolean }

const zero = (): GirderEffects => ({ momentMid_MNm: 0, shearMid_MN: 0, momentPier_MNm: 0, shearPier_MN: 0 });

/** Index of the first vehicle entering at or after t_s (binary search over the sorted list). */
function firstAtOrAfter(vehicles: readonly Vehicle[], t_s: number): number {
  let lo = 0, hi = vehicles.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (vehicles[mid].enter_s < t_s) lo = mid + 1; else hi = mid;
  }
  return lo;
}

/** Girder load effects at t_s from every axle on the deck. Allocates the small result object. */
export function loadEffects(vehicles: readonly Vehicle[], t_s: number): LoadEffects {
  const north = zero();
  const south = zero();
  let heavyOnDeck = false;
  const end = firstAtOrAfter(vehicles, t_s + 1e-9);
  for (let i = firstAtOrAfter(vehicles, t_s - MAX_CROSSING_S); i < end; i++) {
    const v = vehicles[i];
    const travelled = v.speed_mps * (t_s - v.enter_s);
    for (const ax of v.axles) {
      const s = travelled - ax.offset_m;
      if (s < 0 || s > 2 * SPAN_M) continue;
      const a = v.direction === 1 ? s : 2 * SPAN_M - s;
      const p = ax.load_kN / 1000;
      if (v.heavy) heavyOnDeck = true;
      const mMid = p * momentAt(MIDSPAN_X_M, a, SPAN_M), vMid = p * shearAt(MIDSPAN_X_M, a, SPAN_M);
      const mPier = p * momentAt(PIER_SECTION_X_M, a, SPAN_M), vPier = p * shearAt(PIER_SECTION_X_M, a, SPAN_M);
      for (const [g, share] of [[north, v.northShare], [south, 1 - v.northShare]] as const) {
        g.momentMid_MNm += share * mMid; g.shearMid_MN += share * vMid;
        g.momentPier_MNm += share * mPier; g.shearPier_MN += share * vPier;
      }
    }
  }
  return { north, south, heavyOnDeck };
}
