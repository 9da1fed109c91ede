import type { GroupResult } from '../model/result.js';
import { GroupAccumulator, PLOTTED_QUANTITIES } from './group-accumulator.js';
import { SpanTracker } from './health-timeline.js';
import { RunComparer } from './run-comparer.js';
import type { ReportAlarmTransition, ReportInput } from './types.js';

export interface ReportBuilderOptions {
  /** A pause longer than this many times the group's median interval is a data gap (default 3). */
  gapFactor?: number;
  /** Chunks kept per plotted quantity and group (default 2048; a series shorter than that is kept whole). */
  maxChunksPerSeries?: number;
  /** Gaps listed per group (default 2000). */
  maxGapsPerGroup?: number;
  /** Alarm transitions listed in the table (default 5000; all of them make the timelines). */
  maxAlarmRows?: number;
  /** Results of one run waiting for the other run's match (default 50,000). */
  maxWaiting?: number;
  /** A second run is compared with the first. */
  comparison?: boolean;
}

/**
 * Everything the report shows, gathered as a replay streams: per group the plotted series reduced
 * for plotting (min/max per bucket), the gaps, the peaks; the alarm transitions and their spans;
 * the differences from a second run. Memory is bounded by the options, not by the run's length;
 * `renderReport` draws it. Feed each run's results in its own order (per group in time order, as
 * the pipeline gives them).
 */
export class ReportBuilder {
  readonly gapFactor: number;
  readonly groups = new Map<string, GroupAccumulator>();
  /** The second run's groups: von Mises only, drawn dashed. */
  readonly comparisonGroups = new Map<string, GroupAccumulator>();
  readonly comparer: RunComparer | null;
  readonly health = new SpanTracker();
  readonly structural = new SpanTracker();
  readonly alarmRows: ReportAlarmTransition[] = [];
  alarmRowsNotListed = 0;
  /** Earliest and latest time seen (results of both runs, alarms), epoch ms. */
  fromMs = Infinity;
  toMs = -Infinity;
  private readonly o: Required<Omit<ReportBuilderOptions, 'comparison'>>;

  constructor(o: ReportBuilderOptions = {}) {
    this.o = {
      gapFactor: o.gapFactor ?? 3, maxChunksPerSeries: o.maxChunksPerSeries ?? 2048, maxGapsPerGroup: o.maxGapsPerGroup ?? 2000,
      maxAlarmRows: o.maxAlarmRows ?? 5000, maxWaiting: o.maxWaiting ?? 50_000,
    };
    this.gapFactor = this.o.gapFactor;
    this.comparer = o.comparison ? new RunComparer(this.o.maxWaiting) : null;
  }

  /** The builder filled from whole arrays (each run's results put in time order per group first). */
  static fromInput(input: ReportInput): ReportBuilder {
    const b = new ReportBuilder({ gapFactor: input.gapFactor, comparison: input.comparison !== undefined });
    for (const r of byTime(input.run.results)) b.addResult(r);
    for (const r of byTime(input.comparison?.results ?? [])) b.addComparisonResult(r);
    for (const a of [...input.alarms].sort((x, y) => x.time_ms - y.time_ms)) b.addAlarm(a);
    return b;
  }

  addResult(r: GroupResult): void {
    this.time(r.timeMs);
    this.group(this.groups, r.groupId, PLOTTED_QUANTITIES, true).add(r);
    this.comparer?.addFirst(r);
  }

  addComparisonResult(r: GroupResult): void {
    this.time(r.timeMs);
    this.group(this.comparisonGroups, r.groupId, COMPARED, false).add(r);
    this.comparer?.addSecond(r);
  }

  /** An alarm transition, in time order. */
  addAlarm(a: ReportAlarmTransition): void {
    this.time(a.time_ms);
    (a.class === 'health' ? this.health : this.structural).add(a);
    if (this.alarmRows.length < this.o.maxAlarmRows) this.alarmRows.push(a);
    else this.alarmRowsNotListed++;
  }

  private time(t: number): void {
    if (t < this.fromMs) this.fromMs = t;
    if (t > this.toMs) this.toMs = t;
  }

  private group(m: Map<string, GroupAccumulator>, id: string, qs: readonly typeof PLOTTED_QUANTITIES[number][], peaks: boolean): GroupAccumulator {
    let g = m.get(id);
    if (g === undefined) {
      m.set(id, (g = new GroupAccumulator(id, qs, { gapFactor: this.o.gapFactor, maxChunksPerSeries: this.o.maxChunksPerSeries, maxGaps: this.o.maxGapsPerGroup, peaks })));
    }
    return g;
  }
}

const COMPARED = ['von_mises_MPa'] as const;

/** Results in time order within each group (stable: the array order among equal times). */
function byTime(rs: readonly GroupResult[]): GroupResult[] {
  const order = new Map<string, number>();
  for (const r of rs) if (!order.has(r.groupId)) order.set(r.groupId, order.size);
  return [...rs].sort((a, b) => order.get(a.groupId)! - order.get(b.groupId)! || a.timeMs - b.timeMs);
}
