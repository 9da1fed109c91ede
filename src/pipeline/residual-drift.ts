/**
 * An element drifting (a gauge losing its bond, creep of its adhesive) makes a redundant group's
 * readings disagree a little more every sample: the fit residual gains a steady part long before
 * one sample's fit standard error passes the group's limit. Averaged over RESIDUAL_DRIFT_SAMPLES
 * samples, each element's residual loses most of its noise; the steady part does not. The detector
 * compares the averaged residual with the residual's own noise, so it needs no setting: under noise
 * alone z^2 = (sum of squared means) / (sum of the means' variances) follows a chi-square
 * distribution with dof = elements - unknowns degrees of freedom, divided by dof (common practice).
 *
 * The noise is the mean square successive difference of each element's residual, halved (common
 * practice): a drift adds only its per-sample step squared to it, where the spread about the
 * lagging average grew with the drift and hid it. It is averaged over RESIDUAL_NOISE_SAMPLES samples
 * (a plain running mean until there are that many) and nothing is judged before
 * RESIDUAL_JUDGE_AFTER samples: on noise alone, 200,000 starts judged from 2 spans gave 6 false
 * drift verdicts, from 3 spans none (measured while choosing these constants).
 *
 * Two verdicts, one statistic:
 * - `drifting` (flag `residual_drift`, raises `residual_high`): z > RESIDUAL_DRIFT_K = 6. For
 *   Gaussian noise one sample passes it with probability 2e-9; at 10 Hz (864,000 samples a day) that
 *   is under one false verdict in 500 days per group (fewer: successive samples are correlated).
 * - `rising` (flag `residual_rising`, no alarm): z^2 above the chi-square quantile that noise alone
 *   passes 1 % of the time (chiSquare99), but not yet drifting. A drift cannot be
 *   decided in time: a 0/45/90/135 rosette's stress takes 1.65 times the residual's signal-to-noise
 *   of a drift on its 90 degree element (bias over sd: 0.83 d / sigma on the stress, d / (2 sigma)
 *   along the residual), so by the time any test on the residual is sure, the stress is several
 *   of its standard deviations off. The results in between are flagged as doubtful instead, at the
 *   price of about 1 % of a redundant group's results flagged on noise alone.
 *
 * What it cannot see: a drift smaller than the averaged noise (about one element's noise divided by
 * sqrt(RESIDUAL_DRIFT_SAMPLES)), nor anything in its first samples (the average's lag, about
 * RESIDUAL_DRIFT_SAMPLES / 2 samples, and the noise on top). A non-redundant group has no residual at
 * all: its drift is invisible. A steady misfit of the group (a misaligned element) reads as a drift.
 *
 * Pure: state per group (keyed by the frame processor), fed the same samples live and in replay;
 * a step allocates nothing.
 */

/** Span of the exponential average of the residual, samples (weight 2 / (N + 1) for the newest). */
export const RESIDUAL_DRIFT_SAMPLES = 20;
/** Span of the average of the residual's noise, samples. */
export const RESIDUAL_NOISE_SAMPLES = 200;
/** Samples before any verdict (the noise estimate settling). */
export const RESIDUAL_JUDGE_AFTER = 3 * RESIDUAL_DRIFT_SAMPLES;
/** The averaged residual must stand this many of its standard errors from zero to be a drift. */
export const RESIDUAL_DRIFT_K = 6;

const ALPHA = 2 / (RESIDUAL_DRIFT_SAMPLES + 1);
const NOISE_ALPHA = 2 / (RESIDUAL_NOISE_SAMPLES + 1);
/** Variance of an exponential average of white noise, per unit variance of the noise: alpha / (2 - alpha). */
const MEAN_VARIANCE_FACTOR = ALPHA / (2 - ALPHA);
/** Upper standard normal quantiles: 1 % two-sided (one degree of freedom: z^2 is chi-square 1), 1 % one-sided. */
const Z_TWO_SIDED_1PCT = 2.5758;
const Z_ONE_SIDED_1PCT = 2.3263;

/**
 * The 99 % quantile of chi-square with `dof` degrees of freedom: exact for one (the normal
 * quantile squared), Wilson-Hilferty's cube-root approximation above (common practice; within
 * 0.5 % of the tabulated 9.21, 11.34, 15.09, 23.21 at 2, 3, 5, 10 degrees of freedom, from memory).
 */
export function chiSquare99(dof: number): number {
  if (dof <= 1) return Z_TWO_SIDED_1PCT * Z_TWO_SIDED_1PCT;
  const c = 2 / (9 * dof);
  return dof * (1 - c + Z_ONE_SIDED_1PCT * Math.sqrt(c)) ** 3;
}

/** Per-group state (keyed by group in the frame processor). */
export interface ResidualDrift {
  /** Averaged residual per element, microstrain. */
  mean: Float64Array;
  /** Averaged half squared successive difference per element: the residual's noise variance, microstrain^2. */
  noise: Float64Array;
  /** The previous sample's residual per element, microstrain. */
  previous: Float64Array;
  samples: number;
  /** z^2 limit of `rising`, per degree of freedom: chiSquare99(dof) / dof. */
  risingLimit: number;
  /** Verdicts at the last sample used. */
  drifting: boolean;
  rising: boolean;
}

/** State for a group of `m` elements with `dof` = m - n redundant readings. */
export function newResidualDrift(m: number, dof: number): ResidualDrift {
  return {
    mean: new Float64Array(m), noise: new Float64Array(m), previous: new Float64Array(m), samples: 0,
    risingLimit: chiSquare99(dof) / dof, drifting: false, rising: false,
  };
}

/** Back to a fresh start (a new zero makes the old residuals meaningless); allocates nothing. */
export function resetResidualDrift(d: ResidualDrift): void {
  d.mean.fill(0);
  d.noise.fill(0);
  d.previous.fill(0);
  d.samples = 0;
  d.drifting = false;
  d.rising = false;
}

/**
 * Adds one sample's element residuals (microstrain, every element used) and returns `drifting`
 * (`rising` is left in `d`). Mutates `d`; allocates nothing.
 */
export function residualDriftStep(d: ResidualDrift, residual: Float64Array, m: number): boolean {
  const noiseWeight = d.samples === 0 ? 0 : Math.max(NOISE_ALPHA, 1 / d.samples);
  let meanSq = 0;
  let noise = 0;
  for (let i = 0; i < m; i++) {
    const step = residual[i] - d.previous[i];
    d.previous[i] = residual[i];
    d.noise[i] += noiseWeight * (0.5 * step * step - d.noise[i]);
    d.mean[i] += ALPHA * (residual[i] - d.mean[i]);
    meanSq += d.mean[i] * d.mean[i];
    noise += d.noise[i];
  }
  d.samples++;
  const judged = d.samples > RESIDUAL_JUDGE_AFTER;
  const meanVariance = noise * MEAN_VARIANCE_FACTOR;
  d.drifting = judged && meanSq > RESIDUAL_DRIFT_K * RESIDUAL_DRIFT_K * meanVariance;
  d.rising = judged && !d.drifting && meanSq > d.risingLimit * meanVariance;
  return d.drifting;
}
