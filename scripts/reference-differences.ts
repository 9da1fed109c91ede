/**
 * `npm run check:references`: every hand-written reference case of the mechanics and fatigue tests
 * (test/reference/*, each with its source) evaluated through the core, and per quantity the largest
 * absolute difference from the hand-written value (and the largest relative one, over the cases
 * whose expected value is not zero). The last line is one JSON object with the same figures.
 */
import { CAUTION } from '../src/model/caution.js';
import type { ReferenceCase } from '../test/reference/case.js';
import { BRIDGE_CASES } from '../test/reference/bridge-cases.js';
import { FATIGUE_CASES } from '../test/reference/fatigue-cases.js';
import { ROSETTE_CASES } from '../test/reference/rosette-cases.js';
import { STIFFNESS_CASES } from '../test/reference/stiffness-cases.js';
import { STRESS_CASES } from '../test/reference/stress-cases.js';
import { THERMAL_CASES } from '../test/reference/thermal-cases.js';

interface Figures { cases: number; maxAbs: number; worstCase: string; maxRel: number | null; failing: number }

const all: ReferenceCase[] = [...ROSETTE_CASES, ...BRIDGE_CASES, ...THERMAL_CASES, ...STRESS_CASES, ...STIFFNESS_CASES, ...FATIGUE_CASES];
const byQuantity = new Map<string, Figures>();
for (const c of all) {
  const diff = Math.abs(c.actual() - c.expected);
  const f = byQuantity.get(c.quantity) ?? { cases: 0, maxAbs: 0, worstCase: '', maxRel: null, failing: 0 };
  f.cases++;
  // NaN (a quantity not computed) counts as the worst difference there is.
  if (!(diff <= f.maxAbs)) { f.maxAbs = Number.isNaN(diff) ? Infinity : diff; f.worstCase = c.label; }
  // Relative only where the expected value is not zero (a difference from 0 has no scale).
  if (c.expected !== 0) f.maxRel = Math.max(f.maxRel ?? 0, Number.isNaN(diff) ? Infinity : diff / Math.abs(c.expected));
  if (!(diff < c.tolerance)) f.failing++;
  byQuantity.set(c.quantity, f);
}

const fmt = (x: number) => (x === 0 ? '0' : x.toExponential(2));
console.log(CAUTION);
console.log(`${all.length} hand-written reference cases (test/reference/), largest difference from the core per quantity:`);
for (const [q, f] of byQuantity) {
  const rel = f.maxRel === null ? 'relative: n/a (expected values 0)' : `relative ${fmt(f.maxRel)}`;
  console.log(`  ${q}: ${f.cases} cases, absolute ${fmt(f.maxAbs)}${f.maxAbs > 0 ? ` (${f.worstCase})` : ''}, ${rel}${f.failing > 0 ? `, ${f.failing} OUTSIDE their test tolerance` : ''}`);
}
const failing = [...byQuantity.values()].reduce((n, f) => n + f.failing, 0);
console.log(JSON.stringify({
  cases: all.length,
  outside_tolerance: failing,
  quantities: Object.fromEntries([...byQuantity].map(([q, f]) => [q, { cases: f.cases, max_abs: f.maxAbs, max_rel: f.maxRel }])),
}));
if (failing > 0) process.exitCode = 1;
