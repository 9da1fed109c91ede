import { describe, expect, it } from 'vitest';
import { newResidualDrift, residualDriftStep, RESIDUAL_DRIFT_K, RESIDUAL_DRIFT_SAMPLES } from '../../src/pipeline/residual-drift.js';
import { mulberry32 } from '../../simulators/prng.js';

/**
 * Residuals of a four-element rosette at 0/45/90/135 deg: one degree of freedom, along
 * v = (1, -1, 1, -1) / 2 (the residual is the projection of the element errors on v). An error e
 * on one element leaves a residual e/2 along v: +-e/4 on every element.
 */
const V = [0.5, -0.5, 0.5, -0.5];

function feed(samples: number, sigma: number, driftPerSample: number, seed: number): number | null {
  const rng = mulberry32(seed);
  const d = newResidualDrift(4);
  const r = new Float64Array(4);
  for (let k = 0; k < samples; k++) {
    const along = (sigma * rng.gaussian() + 0.5 * driftPerSample * k);
    for (let i = 0; i < 4; i++) r[i] = along * V[i];
    if (residualDriftStep(d, r, 4)) return k;
  }
  return null;
}

describe('residual drift', () => {
  it('never flags noise alone (50 seeds x 20,000 samples, sigma 1 microstrain)', () => {
    let flagged = 0;
    for (let seed = 1; seed <= 50; seed++) if (feed(20_000, 1, 0, seed) !== null) flagged++;
    expect(flagged).toBe(0);
  });

  it('flags a drift once the averaged residual stands K standard errors clear, whatever the noise scale', () => {
    // Noise of the average along v: sigma sqrt(alpha / (2 - alpha)), alpha = 2 / (N + 1) (variance of an
    // exponentially weighted mean of white noise, common practice); the mean residual is e/2 lagging
    // by about (1 - alpha) / alpha samples. The drift starts at once here: found after a few lags.
    const alpha = 2 / (RESIDUAL_DRIFT_SAMPLES + 1);
    const noiseOfMean = Math.sqrt(alpha / (2 - alpha));
    const lag = (1 - alpha) / alpha;
    for (const sigma of [0.5, 1, 4]) {
      const drift = 0.2 * sigma; // microstrain per sample, in units of the noise
      const at = feed(5_000, sigma, drift, 7)!;
      expect(at).not.toBeNull();
      // Error on the element when found, in noise units: K x noise of the mean x 2, plus the lag.
      const expected = 2 * RESIDUAL_DRIFT_K * noiseOfMean + drift / sigma * lag;
      expect(drift * at / sigma).toBeGreaterThan(0.5 * expected);
      expect(drift * at / sigma).toBeLessThan(2 * expected);
    }
  });

  it('judges nothing before 2 x RESIDUAL_DRIFT_SAMPLES samples', () => {
    const d = newResidualDrift(4);
    const big = Float64Array.from(V, (v) => 100 * v);
    for (let k = 1; k < 2 * RESIDUAL_DRIFT_SAMPLES; k++) expect(residualDriftStep(d, big, 4)).toBe(false);
  });
});
