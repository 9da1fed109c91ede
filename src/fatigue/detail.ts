import { histogramAdd, newHistogram, type RangeHistogram } from './histogram.js';
import { newPeakValley, peakValleyStep, pendingExtreme, type PeakValleyState } from './peak-valley.js';
import { newRainflow, rainflowPush, rainflowResidue, type RainflowState } from './rainflow.js';
import { damageOf, type SnCurve } from './sn-curve.js';

/** What one fatigue detail needs from configuration (compiled once). */
export interface FatigueDetailParams {
  curve: SnCurve;
  /** Stress concentration factor from the measured stress to the hot spot (1 at the hot spot). */
  scf: number;
  /** Hysteresis gate on the measured stress, MPa. */
  gateMPa: number;
  binWidthMPa: number;
  bins: number;
  /** Trusted results further apart than this (logger time) break the sequence, ms. */
  gapMs: number;
  /** Damage checkpoints are taken every this much logger time, ms, for the recent rate. */
  checkpointMs: number;
  /** Checkpoints kept (the window of the recent damage rate is checkpointMs * this). */
  checkpoints: number;
}

/**
 * Everything a detail accumulates, plain numbers and arrays (JSON, the state file). Ranges in the
 * histogram and damage are at the hot spot (measured range times the stress concentration factor).
 */
export interface FatigueDetailState {
  peakValley: PeakValleyState;
  rainflow: RainflowState;
  histogram: RangeHistogram;
  /** Miner's sum of the cycles counted so far (closed cycles and the half cycles of ASTM 5.4.4 step 5). */
  damageCounted: number;
  /** Cycles counted so far (half cycles count 0.5). */
  cyclesCounted: number;
  /** Logger time covered by trusted results without a break, ms. */
  monitoredMs: number;
  /** Logger time not monitored: gaps and flagged stretches, ms. */
  notMonitoredMs: number;
  /** Sequence breaks so far (a gap or a flagged stretch). */
  breaks: number;
  /** Trusted results counted. */
  samples: number;
  /** Flagged results skipped. */
  flaggedSamples: number;
  /** Logger time of the last trusted result, ms (NaN before the first). */
  lastTrustedMs: number;
  /** A flagged result came after the last trusted one: the stretch from it on is not monitored. */
  brokenSinceTrusted: boolean;
  /** Logger time of the first trusted result, ms (NaN before it). */
  firstMs: number;
  /** Recent checkpoints, oldest first: monitored time (ms) and damage at it. */
  checkpointMonitoredMs: number[];
  checkpointDamage: number[];
  /** Monitored time at which the next checkpoint is due, ms. */
  nextCheckpointMs: number;
}

export function newDetailState(p: FatigueDetailParams): FatigueDetailState {
  return {
    peakValley: newPeakValley(p.gateMPa), rainflow: newRainflow(), histogram: newHistogram(p.binWidthMPa, p.bins),
    damageCounted: 0, cyclesCounted: 0, monitoredMs: 0, notMonitoredMs: 0, breaks: 0, samples: 0, flaggedSamples: 0,
    lastTrustedMs: NaN, brokenSinceTrusted: false, firstMs: NaN,
    checkpointMonitoredMs: [0], checkpointDamage: [0], nextCheckpointMs: p.checkpointMs,
  };
}

/**
 * Feeds one trusted value (measured stress, MPa, at logger time `timeMs`). Time since the previous
 * trusted value is monitored unless it is longer than the gap or a flagged result came between:
 * then it is counted as not monitored and the sequence is broken. A break keeps the residue and
 * the pending extreme: the values either side are joined as if the stress went straight from one
 * to the other, so no cycle is invented for the stretch not seen, and none seen is dropped.
 * Mutates `s`.
 */
export function detailTrusted(s: FatigueDetailState, p: FatigueDetailParams, timeMs: number, stressMPa: number): void {
  if (!Number.isFinite(stressMPa)) return;
  if (Number.isNaN(s.lastTrustedMs)) {
    s.firstMs = timeMs;
  } else if (timeMs > s.lastTrustedMs) {
    const dt = timeMs - s.lastTrustedMs;
    if (s.brokenSinceTrusted || dt > p.gapMs) { s.notMonitoredMs += dt; s.breaks++; }
    else s.monitoredMs += dt;
  } else if (timeMs < s.lastTrustedMs) {
    return; // out of order: a scan older than one counted cannot be placed in the sequence
  }
  s.lastTrustedMs = timeMs;
  s.brokenSinceTrusted = false;
  s.samples++;
  current = s;
  currentParams = p;
  peakValleyStep(s.peakValley, stressMPa, pushTurningPoint);
  if (s.monitoredMs >= s.nextCheckpointMs) checkpoint(s, p);
}

/** A flagged (untrusted) result at the detail: not counted, and the stretch it sits in is not monitored. */
export function detailFlagged(s: FatigueDetailState): void {
  s.flaggedSamples++;
  if (!Number.isNaN(s.lastTrustedMs)) s.brokenSinceTrusted = true;
}

// The callbacks below are module-level so feeding a value allocates no closure.
let current: FatigueDetailState;
let currentParams: FatigueDetailParams;
function pushTurningPoint(point: number): void { rainflowPush(current.rainflow, point, countCycle); }
function countCycle(rangeMPa: number, _meanMPa: number, count: number): void {
  const hotSpot = rangeMPa * currentParams.scf;
  histogramAdd(current.histogram, hotSpot, count);
  current.damageCounted += damageOf(currentParams.curve, hotSpot, count);
  current.cyclesCounted += count;
}

function checkpoint(s: FatigueDetailState, p: FatigueDetailParams): void {
  s.checkpointMonitoredMs.push(s.monitoredMs);
  s.checkpointDamage.push(s.damageCounted);
  if (s.checkpointMonitoredMs.length > p.checkpoints + 1) { s.checkpointMonitoredMs.shift(); s.checkpointDamage.shift(); }
  s.nextCheckpointMs = s.monitoredMs + p.checkpointMs;
}

/** A detail's figures for a report, the database or an alarm. */
export interface FatigueFigures {
  /** Miner's sum including the residue as half cycles (ASTM E1049-85 5.4.4 step 6). */
  damage: number;
  damageCounted: number;
  /** Damage of the residue as half cycles. */
  damageResidue: number;
  cycles: number;
  residuePoints: number;
  monitoredS: number;
  /** Gaps and flagged stretches, plus the open one after a flagged result, s. */
  notMonitoredS: number;
  breaks: number;
  /** Damage per day of monitored time over the recent window (checkpoints), or over all monitored time when shorter; NaN with no monitored time. */
  damagePerDay: number;
  /** Monitored time the rate is taken over, s. */
  rateWindowS: number;
  /** Histogram with the residue's half cycles added (a copy). */
  histogramCounts: number[];
}

const DAY_MS = 86_400_000;

/** Reads the state, with the residue as half cycles; does not change `s` (allocates: reports only). */
export function detailFigures(s: FatigueDetailState, p: FatigueDetailParams, openUntilMs?: number): FatigueFigures {
  const counts = s.histogram.counts.slice();
  const h: RangeHistogram = { binWidthMPa: s.histogram.binWidthMPa, counts };
  let damageResidue = 0;
  let residueCycles = 0;
  rainflowResidue(s.rainflow, pendingExtreme(s.peakValley), (r, _m, c) => {
    const hot = r * p.scf;
    histogramAdd(h, hot, c);
    damageResidue += damageOf(p.curve, hot, c);
    residueCycles += c;
  });
  const open = s.brokenSinceTrusted && openUntilMs !== undefined && openUntilMs > s.lastTrustedMs ? openUntilMs - s.lastTrustedMs : 0;
  const damage = s.damageCounted + damageResidue;
  // Rate over the recent checkpoints, ending now; counted damage only so the residue's half cycles
  // (which close later) are not taken as a trend.
  const m0 = s.checkpointMonitoredMs[0];
  const d0 = s.checkpointDamage[0];
  const windowMs = s.monitoredMs - m0;
  const damagePerDay = windowMs > 0 ? ((s.damageCounted - d0) / windowMs) * DAY_MS : NaN;
  return {
    damage, damageCounted: s.damageCounted, damageResidue, cycles: s.cyclesCounted + residueCycles,
    residuePoints: s.rainflow.points.length, monitoredS: s.monitoredMs / 1000, notMonitoredS: (s.notMonitoredMs + open) / 1000,
    breaks: s.breaks, damagePerDay, rateWindowS: windowMs / 1000, histogramCounts: counts,
  };
}

/**
 * Remaining life, years, extrapolating the recent damage rate: (1 - damage) / rate. Infinity
 * with no damage accrued in the window, NaN with no monitored time, 0 once damage reaches 1.
 */
export function remainingLifeYears(damage: number, damagePerDay: number): number {
  if (damage >= 1) return 0;
  if (Number.isNaN(damagePerDay)) return NaN;
  if (damagePerDay <= 0) return Infinity;
  return (1 - damage) / damagePerDay / 365.25;
}

/** The assumptions behind `remainingLifeYears`, printed with it everywhere. */
export const REMAINING_LIFE_ASSUMPTIONS: readonly string[] = [
  'traffic and other loading stay as measured over the rate window (no growth, no change of use)',
  'the S-N curve of the configured EN 1993-1-9 detail category, with the partial factors gamma_Ff and gamma_Mf, and the stress concentration factor given',
  "damage adds linearly (Miner's rule); ranges below the cut-off limit do no damage",
  'time not monitored (gaps, flagged results) is excluded: the rate is per monitored day, and no damage is counted for it',
  'damage before monitoring began is not known and is not included',
  'an estimate to support, not replace, qualified engineering judgement and inspection',
];
