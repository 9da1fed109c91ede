/**
 * An element drifting (a gauge losing its bond, creep of its adhesive) makes a redundant group's
 * readings disagree a little more every sample: the fit residual gains a steady part long before
 * one sample's fit standard error passes the group's limit. Averaged over RESIDUAL_DRIFT_SAMPLES
 * samples, each element's residual loses most of its noise; the steady part does not. This detector
 * compares the averaged residual with its own noise, estimated from the same samples, so it needs
 * no setting: under noise alone (sum of squared means) / (sum of the means' variances) follows a
 * chi-square distribution with (elements - unknowns) degrees of freedom divided by them (common
 * practice), and RESIDUAL_DRIFT_K^2 = 36 is far in its tail.
 *
 * What it cannot see: a drift smaller than the averaged noise (about one element's noise divided by
 * sqrt(RESIDUAL_DRIFT_SAMPLES)), and the lag of the average (about half of RESIDUAL_DRIFT_SAMPLES
 * samples of drift). A non-redundant group has no residual at all: its drift is invisible.
 */

/** Span of the exponential averages, samples (weight 2 / (N + 1) for the newest). */
export const RESIDUAL_DRIFT_SAMPLES = 20;
/** The averaged residual must stand this many of its standard errors from zero. */
export const RESIDUAL_DRIFT_K = 6;

const ALPHA = 2 / (RESIDUAL_DRIFT_SAMPLES + 1);
/** Variance of an exponential average of white noise, per unit variance of the noise: alpha / (2 - alpha). */
const MEAN_VARIANCE_FACTOR = ALPHA / (2 - ALPHA);

/** Per-group state (keyed by group in the frame processor). */
export interface ResidualDrift {
  /** Averaged residual per element, microstrain. */
  mean: Float64Array;
  /** Averaged squared innovation (residual less the previous average) per element: the noise, microstrain^2. */
  variance: Float64Array;
  samples: number;
  /** Verdict at the last sample used. */
  drifting: boolean;
}

export function newResidualDrift(m: number): ResidualDrift {
  return { mean: new Float64Array(m), variance: new Float64Array(m), samples: 0, drifting: false };
}

/**
 * Adds one sample's element residuals (microstrain, every element used) and returns the verdict:
 * true when the averaged residual stands clear of its noise. Nothing is judged before
 * 2 x RESIDUAL_DRIFT_SAMPLES samples (the averages are still settling). Mutates `d`; allocates nothing.
 */
export function residualDriftStep(d: ResidualDrift, residual: Float64Array, m: number): boolean {
  let meanSq = 0;
  let variance = 0;
  for (let i = 0; i < m; i++) {
    const innovation = residual[i] - d.mean[i];
    d.variance[i] += ALPHA * (innovation * innovation - d.variance[i]);
    d.mean[i] += ALPHA * innovation;
    meanSq += d.mean[i] * d.mean[i];
    variance += d.variance[i];
  }
  d.samples++;
  d.drifting = d.samples >= 2 * RESIDUAL_DRIFT_SAMPLES && meanSq > RESIDUAL_DRIFT_K * RESIDUAL_DRIFT_K * variance * MEAN_VARIANCE_FACTOR;
  return d.drifting;
}
