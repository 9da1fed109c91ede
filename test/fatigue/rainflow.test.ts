import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { newRainflow, rainflowPush, rainflowResidue } from '../../src/fatigue/rainflow.js';
import { newPeakValley, peakValleyStep, pendingExtreme } from '../../src/fatigue/peak-valley.js';
import { E1049_HISTORY, E1049_TABLE, rainflowTable } from '../reference/fatigue-cases.js';

const countAll = rainflowTable;

describe('rainflow counting (ASTM E1049-85 5.4.4)', () => {
  it('the worked sequence of ASTM E1049-85 5.4.4 gives its cycle table', () => {
    // Source: ASTM E1049-85 (reapproved 2017), 5.4.4, the example history -2, 1, -3, 5, -1, 3, -4, 4, -2.
    // The table is in test/reference/fatigue-cases.ts (shared with `npm run check:references`).
    const counted = countAll(E1049_HISTORY);
    expect([...counted.entries()].sort((a, b) => a[0] - b[0])).toEqual(E1049_TABLE);
  });

  it('the same sequence through the peak-valley extractor, its last point pending, gives the same table', () => {
    // Source: ASTM E1049-85 5.4.4 (same example); the final -2 is only confirmed by the report.
    const pv = newPeakValley(0);
    const s = newRainflow();
    const byRange = new Map<number, number>();
    const sink = (r: number, _m: number, c: number) => byRange.set(r, (byRange.get(r) ?? 0) + c);
    for (const x of [-2, -0.5, 1, -3, 5, 2, -1, 3, -4, 0, 4, -2]) peakValleyStep(pv, x, (p) => rainflowPush(s, p, sink));
    rainflowResidue(s, pendingExtreme(pv), sink);
    expect([...byRange.entries()].sort((a, b) => a[0] - b[0])).toEqual(E1049_TABLE);
  });

  it('asking for a report does not change what is counted afterwards', () => {
    // Self-consistency: step 6 of ASTM E1049-85 5.4.4 is applied to a copy.
    const run = (report: boolean) => {
      const s = newRainflow();
      const seen: number[] = [];
      const sink = (r: number, _m: number, c: number) => seen.push(r, c);
      for (const p of [-2, 1, -3, 5]) rainflowPush(s, p, sink);
      if (report) rainflowResidue(s, -1, () => {});
      for (const p of [-1, 3, -4, 4, -2]) rainflowPush(s, p, sink);
      return { seen, points: s.points };
    };
    expect(run(true)).toEqual(run(false));
    expect(run(true).seen.length).toBeGreaterThan(0);
  });

  it('chunked and whole counting give exactly the same cycles and residue (property)', () => {
    // Self-consistency of the streaming form: no external source needed.
    fc.assert(fc.property(
      fc.array(fc.integer({ min: -1000, max: 1000 }), { minLength: 0, maxLength: 300 }),
      fc.array(fc.integer({ min: 1, max: 40 }), { minLength: 1, maxLength: 20 }),
      fc.integer({ min: 0, max: 50 }),
      (values, chunkSizes, gate) => {
        const whole = runChunks(values, [values.length + 1], gate);
        const chunked = runChunks(values, chunkSizes, gate);
        expect(chunked).toEqual(whole);
      },
    ), { numRuns: 400 });
  });
});

/** Feeds `values` in chunks of the sizes given (cycled), each chunk through a fresh copy of the persisted state. */
function runChunks(values: number[], sizes: number[], gate: number): { cycles: number[][]; residue: number[][] } {
  let pv = newPeakValley(gate);
  let rf = newRainflow();
  const cycles: number[][] = [];
  let i = 0;
  let k = 0;
  while (i < values.length) {
    const end = Math.min(values.length, i + sizes[k++ % sizes.length]);
    for (; i < end; i++) peakValleyStep(pv, values[i], (p) => rainflowPush(rf, p, (r, m, c) => cycles.push([r, m, c])));
    // Between chunks the state goes through JSON, as it does through the state file.
    pv = JSON.parse(JSON.stringify(pv, (_k, v) => (Number.isNaN(v) ? 'NaN' : v)), (_k, v) => (v === 'NaN' ? NaN : v));
    rf = JSON.parse(JSON.stringify(rf));
  }
  const residue: number[][] = [];
  rainflowResidue(rf, pendingExtreme(pv), (r, m, c) => residue.push([r, m, c]));
  return { cycles, residue };
}
