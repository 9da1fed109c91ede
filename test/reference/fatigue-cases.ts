import { detailFigures, detailTrusted, newDetailState, type FatigueDetailParams } from '../../src/fatigue/detail.js';
import { newRainflow, rainflowPush, rainflowResidue } from '../../src/fatigue/rainflow.js';
import { cyclesToFailure, damageOf, snCurve } from '../../src/fatigue/sn-curve.js';
import { digits, type ReferenceCase } from './case.js';

const EN = 'EN 1993-1-9:2005';
/** Counted cycles of a history by range (ASTM E1049-85 5.4.4, residue as half cycles). */
export function rainflowTable(points: number[]): Map<number, number> {
  const s = newRainflow();
  const byRange = new Map<number, number>();
  const sink = (r: number, _m: number, c: number) => byRange.set(r, (byRange.get(r) ?? 0) + c);
  for (const p of points) rainflowPush(s, p, sink);
  rainflowResidue(s, NaN, sink);
  return byRange;
}
/** The example history of ASTM E1049-85 (reapproved 2017) 5.4.4 and its cycle table: range -> cycles. */
export const E1049_HISTORY = [-2, 1, -3, 5, -1, 3, -4, 4, -2];
export const E1049_TABLE: Array<[number, number]> = [[3, 0.5], [4, 1.5], [6, 0.5], [8, 1], [9, 0.5]];

const detailParams = (over: Partial<FatigueDetailParams> = {}): FatigueDetailParams => ({
  curve: snCurve('direct', 71), scf: 1, gateMPa: 1, binWidthMPa: 10, bins: 30, gapMs: 5000, checkpointMs: 3_600_000, checkpoints: 24, ...over,
});
/** Damage of `n` alternations between 0 and `peak` MPa on a category-71 detail. */
function alternatingDamage(n: number, peak: number, scf: number): number {
  const p = detailParams({ scf });
  const s = newDetailState(p);
  for (let i = 0; i < n; i++) detailTrusted(s, p, i * 100, i % 2 === 0 ? 0 : peak);
  return detailFigures(s, p).damage;
}

const Q = 'fatigue: cycles to failure (relative)', D = 'fatigue damage (Miner sum)', L = 'fatigue: curve limits (MPa)';
export const FATIGUE_CASES: ReferenceCase[] = [
  // The curve through (2e6, delta_sigma_C) with m = 3 to 5e6, m = 5 to 1e8 (direct; shear m = 5 from
  // 2e6 to 1e8): delta_sigma_D = (2/5)^(1/3) delta_sigma_C = 52.3 MPa at category 71, delta_sigma_L
  // = (5/100)^(1/5) delta_sigma_D = 28.7 MPa, delta_tau_L = (2/100)^(1/5) delta_tau_C = 36.6 MPa at 80.
  { quantity: L, label: 'category 71: delta_sigma_D', source: `${EN} 7.1, figure 7.1`, expected: Math.cbrt(2 / 5) * 71, tolerance: 1e-9, actual: () => snCurve('direct', 71).limitDMPa },
  { quantity: L, label: 'category 71: delta_sigma_L', source: `${EN} 7.1, figure 7.1`, expected: (5 / 100) ** 0.2 * Math.cbrt(2 / 5) * 71, tolerance: 1e-9, actual: () => snCurve('direct', 71).cutoffMPa },
  { quantity: L, label: 'shear category 80: cut-off', source: `${EN} figure 7.2`, expected: (2 / 100) ** 0.2 * 80, tolerance: 1e-9, actual: () => snCurve('shear', 80).cutoffMPa },
  // Equation 7.1: N = 2e6 (71/100)^3 = 715,822; compared as a ratio (counts span decades).
  { quantity: Q, label: 'category 71 at 100 MPa: N = 715,822', source: `${EN} equation 7.1`, expected: 1, tolerance: 1e-6, actual: () => cyclesToFailure(snCurve('direct', 71), 100) / 715_822 },
  { quantity: Q, label: 'shear category 80 at 80 MPa: N = 2e6', source: `${EN} figure 7.2, equation 7.3`, expected: 1, tolerance: 2.5e-10, actual: () => cyclesToFailure(snCurve('shear', 80), 80) / 2e6 },
  { quantity: Q, label: 'shear category 80 at 40 MPa: N = 2e6 x 2^5', source: `${EN} figure 7.2, equation 7.3 (m = 5)`, expected: 1, tolerance: 1e-9, actual: () => cyclesToFailure(snCurve('shear', 80), 40) / (2e6 * 32) },
  { quantity: Q, label: 'category 71, gamma_Ff 1.1, gamma_Mf 1.15, at 100 MPa', source: `${EN} 8 (1), equation 8.2`, expected: 1, tolerance: 1e-9, actual: () => cyclesToFailure(snCurve('direct', 71, 1.1, 1.15), 100) / (2e6 * (71 / (100 * 1.1 * 1.15)) ** 3) },
  // delta_sigma_C is the strength at 2e6 cycles: Miner's damage 1.0 (7.1 and annex A).
  ...[160, 71, 36].map((cat): ReferenceCase => ({ quantity: D, label: `category ${cat}: 2e6 cycles at the category range`, source: `${EN} 7.1, annex A (Miner's rule)`, expected: 1, tolerance: digits(12), actual: () => damageOf(snCurve('direct', cat), cat, 2e6) })),
  { quantity: D, label: 'detail: 19,999 alternations 0-71 MPa on category 71 = 9,999.5 cycles / 2e6', source: `${EN} 7.1, annex A`, expected: 19_999 / 2 / 2e6, tolerance: digits(12), actual: () => alternatingDamage(20_000, 71, 1) },
  { quantity: D, label: 'detail: stress concentration 2 on 1000 cycles of 50 MPa: 1000 (100/71)^3 / 2e6', source: `${EN} 6.3, 7.1`, expected: (1000 * (100 / 71) ** 3) / 2e6, tolerance: digits(12), actual: () => alternatingDamage(2001, 50, 2) },
  ...E1049_TABLE.map(([range, cycles]): ReferenceCase => ({ quantity: 'rainflow cycles (count)', label: `ASTM E1049-85 5.4.4 example: cycles of range ${range}`, source: 'ASTM E1049-85 (reapproved 2017) 5.4.4', expected: cycles, tolerance: 1e-12, actual: () => rainflowTable(E1049_HISTORY).get(range) ?? 0 })),
];
