import { describe, expect, it } from 'vitest';
import { detailFigures, detailFlagged, detailTrusted, newDetailState, remainingLifeYears, type FatigueDetailParams } from '../../src/fatigue/detail.js';
import { snCurve } from '../../src/fatigue/sn-curve.js';
import { FATIGUE_CASES } from '../reference/fatigue-cases.js';

const params = (over: Partial<FatigueDetailParams> = {}): FatigueDetailParams => ({
  curve: snCurve('direct', 71), scf: 1, gateMPa: 1, binWidthMPa: 10, bins: 30, gapMs: 5000, checkpointMs: 3_600_000, checkpoints: 24, ...over,
});

describe('fatigue detail accumulation', () => {
  for (const c of FATIGUE_CASES.filter((x) => /^detail/.test(x.label))) {
    it(`${c.label} (${c.source})`, () => {
      expect(Math.abs(c.actual() - c.expected)).toBeLessThan(c.tolerance);
    });
  }

  it('constant-amplitude cycles of the category range: damage = cycles / 2e6, all in one bin', () => {
    // Source: EN 1993-1-9:2005 7.1 (delta_sigma_C at 2e6 cycles), Miner's rule (annex A).
    const p = params();
    const s = newDetailState(p);
    for (let i = 0; i < 20_000; i++) detailTrusted(s, p, i * 100, i % 2 === 0 ? 0 : 71);
    const f = detailFigures(s, p);
    expect(f.cycles).toBeCloseTo(19_999 / 2, 9);
    // The damage: a case of test/reference/fatigue-cases.ts.
    expect(f.histogramCounts[7]).toBeCloseTo(19_999 / 2, 9);
    expect(f.monitoredS).toBeCloseTo(1999.9, 6);
    expect(f.notMonitoredS).toBe(0);
  });

  it('a stress concentration factor multiplies the ranges before damage and binning', () => {
    // Source: EN 1993-1-9:2005 6.3 (geometric stress ranges: nominal times a concentration factor).
    const p = params({ scf: 2 });
    const s = newDetailState(p);
    for (let i = 0; i < 2001; i++) detailTrusted(s, p, i * 100, i % 2 === 0 ? 0 : 50);
    const f = detailFigures(s, p);
    expect(f.histogramCounts[10]).toBeCloseTo(1000, 9);
    // The damage: a case of test/reference/fatigue-cases.ts.
  });

  it('a gap and a flagged stretch are counted as time not monitored; the residue is kept across them', () => {
    // Defined by this project (README, fatigue): no cycle is invented for time not seen.
    const p = params();
    const s = newDetailState(p);
    detailTrusted(s, p, 0, 0);
    detailTrusted(s, p, 1000, 80);
    detailTrusted(s, p, 60_000, 10); // gap of 59 s > 5 s
    detailFlagged(s);
    detailTrusted(s, p, 61_000, 90); // after a flagged result: 1 s not monitored
    detailTrusted(s, p, 62_000, 0);
    const f = detailFigures(s, p);
    expect(f.monitoredS).toBeCloseTo(2, 9);
    expect(f.notMonitoredS).toBeCloseTo(60, 9);
    expect(f.breaks).toBe(2);
    // Turning points 0, 80, 10, 90 (0 pending): the 70 MPa range closes as a cycle (ASTM E1049-85 5.4.4 three-point rule).
    expect(f.damageCounted).toBeCloseTo(1 / (2e6 * (71 / 70) ** 3), 18);
    // Residue 0, 90 and the pending 0: two half cycles of 90 MPa (ASTM E1049-85 5.4.4 step 6).
    expect(f.damage - f.damageCounted).toBeCloseTo(1 / (2e6 * (71 / 90) ** 3), 18);
    expect(f.residuePoints).toBe(2);
  });

  it('an open flagged stretch counts as not monitored up to the time asked', () => {
    const p = params();
    const s = newDetailState(p);
    detailTrusted(s, p, 0, 0);
    detailFlagged(s);
    expect(detailFigures(s, p, 30_000).notMonitoredS).toBeCloseTo(30, 9);
  });

  it('the damage rate and remaining life extrapolate the recent checkpoints', () => {
    const p = params({ checkpointMs: 1000, checkpoints: 10 });
    const s = newDetailState(p);
    // 71 MPa cycles, one per second of monitored time: 0.5 / 2e6 per half-second step.
    for (let i = 0; i <= 100; i++) detailTrusted(s, p, i * 500, i % 2 === 0 ? 0 : 71);
    const f = detailFigures(s, p);
    expect(f.rateWindowS).toBeCloseTo(10, 9);
    expect(f.damagePerDay).toBeCloseTo((86_400 / 2e6), 9);
    expect(remainingLifeYears(f.damage, f.damagePerDay)).toBeCloseTo((1 - f.damage) / f.damagePerDay / 365.25, 9);
    expect(remainingLifeYears(1.2, 1)).toBe(0);
    expect(remainingLifeYears(0.1, 0)).toBe(Infinity);
  });
});
