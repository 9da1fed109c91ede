import type { SnCurve } from '../fatigue/sn-curve.js';
import type { GroupResult, ResultQuantity } from '../model/result.js';

/**
 * Inputs of the diagnosis report. The alarm transition is a minimal local shape (not the engine's
 * full record) so the report can be fed from the alarm log, a database query or a test.
 */
export interface ReportAlarmTransition {
  /** When the alarm changed, epoch ms. */
  time_ms: number;
  alarm_id: string;
  class: 'structural' | 'health';
  /** e.g. active_unacknowledged, active_acknowledged, cleared_unacknowledged, closed. */
  state: string;
  level: string;
  group_id?: string;
  channel?: string;
  quantity?: string;
  value?: number;
  limit?: number;
  message: string;
}

/** One limit of one quantity: an alarm band beyond `upper` (or below `lower`), in the quantity's unit. */
export interface LimitBand {
  level: string;
  upper?: number;
  lower?: number;
  /** Only these groups (all when absent). */
  groups?: string[];
}

export type QuantityLimits = Partial<Record<ResultQuantity, LimitBand[]>>;

/** A set of results: a live run, or a replay with another configuration. */
export interface ReportRun {
  label: string;
  results: readonly GroupResult[];
}

/** Messages the replayed capture should hold and does not (a damaged member, a missing file). */
export interface ReportCaptureGap {
  file: string;
  /** Arrival times the lost messages lie within, epoch ms. */
  fromMs: number;
  toMs: number;
  /** Messages lost; null when unknown. */
  messages: number | null;
  reason: string;
}

/** One fatigue detail's figures at the end of a run (a local shape: fed from a replay, the database or a test). */
export interface ReportFatigueDetail {
  id: string;
  groupId: string;
  location: string;
  /** What is counted, in words (stress, category, factors). */
  describe: string;
  curve: SnCurve;
  /** Miner's sum, the residue as half cycles. */
  damage: number;
  /** Per monitored day over the rate window; null while not known. */
  damagePerDay: number | null;
  rateWindowS: number;
  /** Years; Infinity when no damage accrued over the window, null while not known. */
  remainingLifeYears: number | null;
  cycles: number;
  monitoredS: number;
  notMonitoredS: number;
  breaks: number;
  /** Hot-spot stress-range histogram (bin width MPa; the last bin is everything above). */
  binWidthMPa: number;
  counts: readonly number[];
}

export interface ReportFatigue {
  /** Logger time the figures are at, epoch ms. */
  atMs: number;
  details: readonly ReportFatigueDetail[];
  /** The assumptions behind the remaining-life estimate, printed with it. */
  assumptions: readonly string[];
  /** The comparison run's figures (same detail ids), when there is one. */
  comparison?: readonly ReportFatigueDetail[];
}

export interface ReportInput {
  title: string;
  structureId: string;
  /** When the report was made, epoch ms (injected: the report never reads the clock). */
  generatedAtMs: number;
  run: ReportRun;
  alarms: readonly ReportAlarmTransition[];
  limits?: QuantityLimits;
  /** A second run to compare with the first, result by result (same group and logger time). */
  comparison?: ReportRun;
  /** Gaps of the capture the run was replayed from (none: the capture was read whole). */
  captureGaps?: readonly ReportCaptureGap[];
  /**
   * A pause between two results of a group longer than this many times the group's median
   * interval is a data gap (default 3): the line breaks there and the gap is shaded.
   */
  gapFactor?: number;
  /** The configuration's alarm levels, lowest first: the timeline draws each level differently. */
  levels?: readonly string[];
  /** Fatigue of the run (absent: the structure counts none). */
  fatigue?: ReportFatigue;
  /** Plot width in pixels (default 860); series are reduced to min/max per pixel column. */
  plotWidthPx?: number;
}

/** A health alarm's active span, for the timeline. */
export interface ActiveSpan {
  alarm_id: string;
  label: string;
  level: string;
  fromMs: number;
  /** null = still active at the end of the report. */
  toMs: number | null;
}
