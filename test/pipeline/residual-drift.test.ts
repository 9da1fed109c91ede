import { describe, expect, it } from 'vitest';
import {
  chiSquare99, newResidualDrift, resetResidualDrift, residualDriftStep, RESIDUAL_DRIFT_K, RESIDUAL_DRIFT_SAMPLES, RESIDUAL_JUDGE_AFTER,
} from '../../src/pipeline/residual-drift.js';
import { mulberry32 } from '../../simulators/prng.js';

/**
 * Residuals of a four-element rosette at 0/45/90/135 deg: one degree of freedom, along
 * v = (1, -1, 1, -1) / 2 (the residual is the projection of the element errors on v). An error e
 * on one element leaves a residual e/2 along v: +-e/4 on every element.
 */
const V = [0.5, -0.5, 0.5, -0.5];

interface Fed { driftAt: number | null; risingAt: number | null; rising: number; judged: number }

/** Feeds noise (sigma along v) and a drift starting at sample `onset`; stops at the first drift verdict. */
function feed(samples: number, sigma: number, driftPerSample: number, seed: number, onset = 0): Fed {
  const rng = mulberry32(seed);
  const d = newResidualDrift(4, 1);
  const r = new Float64Array(4);
  const out: Fed = { driftAt: null, risingAt: null, rising: 0, judged: 0 };
  for (let k = 0; k < samples; k++) {
    const along = sigma * rng.gaussian() + 0.5 * driftPerSample * Math.max(0, k - onset);
    for (let i = 0; i < 4; i++) r[i] = along * V[i];
    const drifting = residualDriftStep(d, r, 4);
    if (d.samples > RESIDUAL_JUDGE_AFTER) out.judged++;
    if (d.rising) {
      out.rising++;
      if (k >= onset && out.risingAt === null) out.risingAt = k - onset;
    }
    if (drifting) {
      out.driftAt = k - onset;
      return out;
    }
  }
  return out;
}

describe('residual drift', () => {
  it('never decides a drift on noise alone, and flags rising on about 1 % of the samples (100 seeds x 20,000 samples)', () => {
    let drifts = 0, rising = 0, judged = 0;
    for (let seed = 1; seed <= 100; seed++) {
      const f = feed(20_000, 1, 0, seed);
      if (f.driftAt !== null) drifts++;
      rising += f.rising;
      judged += f.judged;
    }
    expect(drifts).toBe(0);
    // The 99 % quantile of the statistic; a little more since the noise is itself estimated.
    expect(rising / judged).toBeGreaterThan(0.008);
    expect(rising / judged).toBeLessThan(0.015);
  });

  it('chiSquare99: the normal quantile squared for one degree of freedom, Wilson-Hilferty above', () => {
    // Tabulated 99 % points of chi-square (from memory): 6.635, 9.210, 11.345, 15.086, 23.209.
    expect(chiSquare99(1)).toBeCloseTo(6.635, 2);
    for (const [dof, tab] of [[2, 9.21], [3, 11.345], [5, 15.086], [10, 23.209]]) expect(Math.abs(chiSquare99(dof) / tab - 1)).toBeLessThan(0.005);
  });

  it('decides a drift once the averaged residual stands K standard errors clear, whatever the noise scale', () => {
    // Noise of the average along v: sigma sqrt(alpha / (2 - alpha)), alpha = 2 / (N + 1) (variance of an
    // exponentially weighted mean of white noise, common practice); the mean residual is e/2 lagging
    // by about (1 - alpha) / alpha samples.
    const alpha = 2 / (RESIDUAL_DRIFT_SAMPLES + 1);
    const noiseOfMean = Math.sqrt(alpha / (2 - alpha));
    const lag = (1 - alpha) / alpha;
    for (const sigma of [0.5, 1, 4]) {
      const drift = 0.2 * sigma; // microstrain per sample, in units of the noise
      const at = feed(5_000, sigma, drift, 7, 300).driftAt!;
      expect(at).not.toBeNull();
      // Error on the element when found, in noise units: K x noise of the mean x 2, plus the lag.
      const expected = 2 * RESIDUAL_DRIFT_K * noiseOfMean + (drift / sigma) * lag;
      expect((drift * at) / sigma).toBeGreaterThan(0.7 * expected);
      expect((drift * at) / sigma).toBeLessThan(1.3 * expected);
    }
  });

  it('flags rising well before it decides: a drift of 0.25 sigma per sample on one element, 200 seeds', () => {
    // The simulator's debonding gauge (2.4 microstrain/s at 10 Hz, 0.95 microstrain of noise).
    const risingAt: number[] = [], driftAt: number[] = [];
    for (let seed = 1; seed <= 200; seed++) {
      const f = feed(2_000, 1, 0.25, seed, 500);
      risingAt.push(f.risingAt!);
      driftAt.push(f.driftAt!);
    }
    const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[xs.length >> 1];
    // Measured: rising after 11 samples (median; 17 at most), the drift decided after 19 (24 at most).
    expect(median(risingAt)).toBeLessThan(14);
    expect(median(driftAt)).toBeGreaterThan(median(risingAt) + 4);
    expect(Math.max(...driftAt)).toBeLessThan(30);
  });

  it(`judges nothing in the first ${RESIDUAL_JUDGE_AFTER} samples, and again after a reset`, () => {
    const d = newResidualDrift(4, 1);
    const rng = mulberry32(3);
    const r = new Float64Array(4);
    const step = (offset: number) => {
      const along = offset + rng.gaussian();
      for (let i = 0; i < 4; i++) r[i] = along * V[i];
      return residualDriftStep(d, r, 4);
    };
    for (let k = 1; k <= RESIDUAL_JUDGE_AFTER; k++) expect(step(100)).toBe(false);
    expect(step(100)).toBe(true);
    resetResidualDrift(d);
    for (let k = 1; k <= RESIDUAL_JUDGE_AFTER; k++) {
      expect(step(100)).toBe(false);
      expect(d.rising).toBe(false);
    }
  });
});
