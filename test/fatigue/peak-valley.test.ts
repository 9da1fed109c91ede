import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { newPeakValley, peakValleyStep, pendingExtreme } from '../../src/fatigue/peak-valley.js';

function turningPoints(values: number[], gate: number): number[] {
  const s = newPeakValley(gate);
  const out: number[] = [];
  for (const v of values) peakValleyStep(s, v, (p) => out.push(p));
  const last = pendingExtreme(s);
  if (!Number.isNaN(last)) out.push(last);
  return out;
}

describe('peak-valley extraction with a hysteresis gate', () => {
  it('keeps the turning points of a history whose reversals are all at least the gate (property)', () => {
    // common practice: a hysteresis (racetrack) gate filters only reversals smaller than it.
    fc.assert(fc.property(
      fc.integer({ min: 0, max: 20 }),
      fc.array(fc.integer({ min: 0, max: 200 }), { minLength: 1, maxLength: 60 }),
      fc.integer({ min: -500, max: 500 }), fc.boolean(),
      (gate, extra, start, up) => {
        // Alternating turning points, each range at least the gate and above zero.
        const tps = [start];
        let dir = up ? 1 : -1;
        for (const e of extra) { tps.push(tps[tps.length - 1] + dir * (Math.max(gate, 1) + e)); dir = -dir; }
        // Samples in between (monotone, so they are no reversal) must not change the answer.
        const samples: number[] = [tps[0]];
        for (let i = 1; i < tps.length; i++) { samples.push((tps[i - 1] + tps[i]) / 2, tps[i]); }
        expect(turningPoints(samples, gate)).toEqual(tps.length > 1 ? tps : []);
      },
    ), { numRuns: 300 });
  });

  it('removes every reversal below the gate: noise added to such a history changes nothing (property)', () => {
    // common practice: noise smaller than half the gate cannot make a reversal of the gate.
    fc.assert(fc.property(
      fc.array(fc.integer({ min: 0, max: 200 }), { minLength: 1, maxLength: 40 }),
      fc.array(fc.double({ min: -0.99, max: 0.99, noNaN: true }), { minLength: 200, maxLength: 200 }),
      (extra, noise) => {
        const gate = 10;
        const tps = [0];
        let dir = 1;
        for (const e of extra) { tps.push(tps[tps.length - 1] + dir * (gate * 3 + e)); dir = -dir; }
        // Between turning points a ramp with noise of amplitude < gate/10 on the way (never past the ends).
        const samples: number[] = [tps[0]];
        let k = 0;
        for (let i = 1; i < tps.length; i++) {
          const a = tps[i - 1]; const b = tps[i];
          for (let j = 1; j < 10; j++) samples.push(a + ((b - a) * j) / 10 + noise[k++ % noise.length]);
          samples.push(b);
        }
        expect(turningPoints(samples, gate)).toEqual(tps);
      },
    ), { numRuns: 300 });
  });

  it('every range it gives is at least the gate, and the gate 0 keeps every strict reversal', () => {
    // common practice (definition of the gate).
    fc.assert(fc.property(fc.array(fc.integer({ min: -100, max: 100 }), { maxLength: 200 }), fc.integer({ min: 0, max: 50 }), (values, gate) => {
      const tp = turningPoints(values, gate);
      for (let i = 1; i < tp.length; i++) {
        expect(Math.abs(tp[i] - tp[i - 1])).toBeGreaterThanOrEqual(Math.max(gate, Number.MIN_VALUE));
        if (i >= 2) expect(Math.sign(tp[i] - tp[i - 1])).toBe(-Math.sign(tp[i - 1] - tp[i - 2]));
      }
    }), { numRuns: 300 });
    expect(turningPoints([0, 1, 1, 0.5, 2, -1], 0)).toEqual([0, 1, 0.5, 2, -1]);
    expect(turningPoints([0, 1, 1, 0.5, 2, -1], 0.6)).toEqual([0, 2, -1]);
  });
});
