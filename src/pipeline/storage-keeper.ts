import { newSampleWindow, pushSample, slopePerS, type SampleWindow } from '../alarms/engine/sample-window.js';
import type { AlarmSubject, AlarmTransition } from '../alarms/types.js';
import { RING_SLACK_MS, type CompiledStorage, type CompiledTrigger } from '../config/compile-storage.js';
import type { LineBlock } from '../model/point.js';
import { qualityBits } from '../model/quality.js';
import type { LoggerFrame } from '../model/raw-message.js';
import { RESULT_QUANTITIES, type GroupResult } from '../model/result.js';
import { inWindow, newResultRing, newWindowSpan, openWindow, ringDropBefore, ringPush, ringTakeFrom, type ResultRing, type WindowSpan } from './event-windows.js';
import { FieldPlaces } from '../results/field-places.js';
import { frameLineWriter, type FrameLineOptions, type FrameLineWriter } from './frame-lines.js';
import { STORAGE_STATE_VERSION, type StorageState } from './storage-state.js';
import {
  closeInterval, foldValue, isOpen, newSummarySeries, noteFolded, placeSample, seriesFromJson, seriesToJson, type SummarySeries,
} from './summary-accumulator.js';
import { intervalTag, rawSummaryKeys, writeRawSummary, writeResultSummary } from './summary-lines.js';

export interface StorageCounts {
  summaryLines: number;
  rawSummaryLines: number;
  /** Spans opened (a trigger inside a span extends it and is not counted). */
  windowsOpened: number;
  /** Results written at full rate because an event window covered them. */
  windowResults: number;
  /** Results (or scans) of a summarised series at or before what it last folded: written in full, not folded. */
  lateResults: number;
  checkpoints: number;
  checkpointFailures: number;
  /** Results overwritten in a full pre-trigger ring, over every group. */
  ringOverwritten: number;
  /** Memory of every pre-trigger ring, bytes (fixed at start). */
  ringBytes: number;
}

export const newStorageCounts = (): StorageCounts => ({
  summaryLines: 0, rawSummaryLines: 0, windowsOpened: 0, windowResults: 0, lateResults: 0, checkpoints: 0, checkpointFailures: 0, ringOverwritten: 0, ringBytes: 0,
});

interface GroupStore {
  loggerId: string;
  series: SummarySeries | null;
  key: Buffer | null;
  ring: ResultRing | null;
  window: WindowSpan;
  triggers: CompiledTrigger[];
  rates: SampleWindow[];
  /** Field name -> statistics index q, by position (field-places.ts). */
  quantities: FieldPlaces<number>;
}

interface LoggerStore {
  series: SummarySeries;
  key: Buffer;
  keys: ReturnType<typeof rawSummaryKeys>;
  channels: readonly string[];
}

const WINDOW_KINDS = new Set(['raised', 'level_changed', 'cleared']);
const Q = RESULT_QUANTITIES.length;
/** Quantity name -> index q of the summary statistics. */
const QUANTITY_INDEX = new Map<string, number>(RESULT_QUANTITIES.map((name, q) => [name, q]));

/**
 * The storage policy's state and decisions, pure (no RxJS, no I/O, time from the inputs only):
 * what each input writes, as lines in two buffers: `lines` (results and raw readings at full rate,
 * taken with the frame that caused them) and `summaries` (closed intervals). Keyed per group and
 * logger; storage-stage.ts is the operator around it.
 */
export class StorageKeeper {
  readonly lines: FrameLineWriter;
  readonly summaries: FrameLineWriter;
  private readonly groups = new Map<string, GroupStore>();
  private readonly loggers = new Map<string, LoggerStore>();
  private clockMs = Number.NEGATIVE_INFINITY;
  private startClockMs = Number.NaN;
  /** Per logger: frames received and not yet computed (held for temperature or a reading's verdict), and the clock at the last arrival. */
  private readonly pending = new Map<string, number>();
  private readonly lastArrivalMs = new Map<string, number>();

  constructor(private readonly cfg: CompiledStorage, private readonly structureId: string, lineOptions: FrameLineOptions | undefined, readonly counts: StorageCounts) {
    const w = (this.lines = frameLineWriter(lineOptions));
    this.summaries = frameLineWriter(lineOptions);
    for (const g of cfg.groups.values()) {
      const summary = g.summaryIntervalMs !== null;
      const triggers = cfg.triggers.filter((t) => t.groups.has(g.groupId));
      this.groups.set(g.groupId, {
        loggerId: g.loggerId,
        series: summary ? newSummarySeries(Q, g.summaryIntervalMs!) : null,
        key: summary ? w.seriesKey('sw_summary', [['structure', structureId], ['group', g.groupId], ['zone', g.zone], ['logger', g.loggerId], ['interval', intervalTag(g.summaryIntervalMs!)]]) : null,
        ring: summary && g.ringCapacity > 0 ? newResultRing(structureId, g.groupId, g.zone, g.loggerId, g.elementGauges, g.ringCapacity) : null,
        window: newWindowSpan(), triggers, rates: triggers.map(() => newSampleWindow()),
        quantities: new FieldPlaces((name) => QUANTITY_INDEX.get(name)!),
      });
    }
    if (cfg.raw.store === 'summary') {
      for (const [loggerId, channels] of cfg.loggerChannels) {
        this.loggers.set(loggerId, {
          series: newSummarySeries(channels.length + 1, cfg.raw.intervalMs), channels, keys: rawSummaryKeys(channels),
          key: w.seriesKey('sw_raw_summary', [['structure', structureId], ['logger', loggerId], ['interval', intervalTag(cfg.raw.intervalMs)]]),
        });
      }
    }
    counts.ringBytes = [...this.groups.values()].reduce((s, g) => s + (g.ring?.data.byteLength ?? 0), 0);
  }

  /** Takes a previous run's state over; a series whose interval was changed since is written as it stood and restarted. */
  restore(state: StorageState): void {
    for (const { series, intervalMs } of restore(state, this.groups, this.loggers)) {
      if (isOpen(series)) {
        const g = [...this.groups.values()].find((x) => x.series === series);
        const l = [...this.loggers.values()].find((x) => x.series === series);
        if (g !== undefined) this.writeSummary(g);
        if (l !== undefined) this.writeRawSummaryOf(l);
      }
      closeInterval(series, Number.NaN);
      series.intervalMs = intervalMs;
    }
  }

  /** The state as JSON, with the summary lines not yet durable. */
  snapshot(unwritten: string[]): string {
    const state: StorageState = { version: STORAGE_STATE_VERSION, structure: this.structureId, groups: {}, loggers: {}, unwritten };
    for (const [id, g] of this.groups) {
      state.groups[id] = { series: g.series ? seriesToJson(g.series) : null, window: Number.isNaN(g.window.startMs) ? null : [g.window.startMs, g.window.endMs] };
    }
    for (const [id, l] of this.loggers) state.loggers[id] = seriesToJson(l.series);
    return JSON.stringify(state);
  }

  ringOverwritten(): number {
    let n = 0;
    for (const g of this.groups.values()) n += g.ring?.overwritten ?? 0;
    return n;
  }

  /** A frame as received (its results may come later): the clock, and what its logger has pending. */
  received(f: LoggerFrame): void {
    this.advance(f.arrivalMs);
    this.pending.set(f.loggerId, (this.pending.get(f.loggerId) ?? 0) + 1);
    this.lastArrivalMs.set(f.loggerId, this.clockMs);
  }

  /** A tick of the pipeline clock: intervals of silent loggers are written. */
  tick(nowMs: number): void {
    this.advance(nowMs);
    this.closeSilent(false);
  }

  /** A computed frame: triggers first (a window opened by one result covers the frame's others), then each result, then the raw readings. */
  frame(f: LoggerFrame, results: readonly GroupResult[]): void {
    this.pending.set(f.loggerId, (this.pending.get(f.loggerId) ?? 1) - 1);
    for (let i = 0; i < results.length; i++) {
      const g = this.groups.get(results[i].groupId);
      if (g !== undefined && g.triggers.length > 0) this.checkTriggers(results[i], g);
    }
    for (let i = 0; i < results.length; i++) this.storeResult(results[i]);
    this.storeRaw(f);
  }

  /** Alarm transitions (raised, level changed, cleared) open windows over their subjects' groups. */
  alarms(transitions: readonly AlarmTransition[]): void {
    if (!this.cfg.onAlarms || !this.cfg.anySummary) return;
    for (const t of transitions) {
      if (!WINDOW_KINDS.has(t.kind)) continue;
      for (const id of subjectGroups(t.alarm.subject, this.cfg)) this.fire(id, t.atMs);
    }
  }

  /** Writes every open interval (the end of a replay). */
  closeAll(): void {
    this.closeSilent(true);
  }

  takeLines(): LineBlock { return this.lines.take(); }
  takeSummaries(): LineBlock { return this.summaries.take(); }

  private advance(t: number): void {
    if (t > this.clockMs) this.clockMs = t;
    if (Number.isNaN(this.startClockMs)) this.startClockMs = this.clockMs;
  }

  /** Nothing more can come for the logger's open intervals: nothing held, and silent for closeAfterMs (counted from this start at first). */
  private silent(loggerId: string): boolean {
    return (this.pending.get(loggerId) ?? 0) === 0 && this.clockMs - (this.lastArrivalMs.get(loggerId) ?? this.startClockMs) >= this.cfg.closeAfterMs;
  }

  private writeSummary(g: GroupStore): void {
    writeResultSummary(this.summaries, g.key!, g.series!.stats);
    this.counts.summaryLines++;
  }

  private writeRawSummaryOf(l: LoggerStore): void {
    writeRawSummary(this.summaries, l.key, l.keys, l.series.stats);
    this.counts.rawSummaryLines++;
  }

  private writeWindowed(r: GroupResult): void {
    this.lines.result(r);
    this.counts.windowResults++;
  }

  /** A trigger at tMs in group `groupId`: the window of every group it covers opens or grows. */
  private fire(groupId: string, tMs: number): void {
    for (const id of this.cfg.windowGroups.get(groupId) ?? []) {
      const g = this.groups.get(id);
      if (g === undefined || g.series === null) continue; // a full group stores everything anyway
      const { merged, fromMs } = openWindow(g.window, tMs, this.cfg.beforeMs, this.cfg.afterMs);
      if (!merged) this.counts.windowsOpened++;
      if (g.ring !== null) ringTakeFrom(g.ring, fromMs, (r) => this.writeWindowed(r));
    }
  }

  private checkTriggers(r: GroupResult, g: GroupStore): void {
    if (r.flags.length > 0) return; // a doubtful value opens no window (its health alarm does)
    for (let i = 0; i < g.triggers.length; i++) {
      const t = g.triggers[i];
      const v = r.values[t.quantity];
      if (v === undefined) continue;
      if (t.kind === 'level') {
        if (v > t.above || v < t.below) this.fire(r.groupId, r.timeMs);
        continue;
      }
      pushSample(g.rates[i], r.timeMs, v, t.windowMs, t.windowMs / 200);
      const slope = slopePerS(g.rates[i], t.windowMs / 2);
      if (slope !== null && Math.abs(slope) > t.ratePerS) this.fire(r.groupId, r.timeMs);
    }
  }

  private storeResult(r: GroupResult): void {
    const g = this.groups.get(r.groupId);
    const series = g?.series ?? null;
    if (g === undefined || series === null) { this.lines.result(r); return; }
    const place = placeSample(series, r.timeMs, r.seq);
    if (place === 'late') { this.counts.lateResults++; this.lines.result(r); return; }
    const s = series.stats;
    if (place === 'close') {
      this.writeSummary(g);
      closeInterval(series, r.timeMs);
    }
    if (r.flags.length > 0) {
      s.flagged++;
      s.flagBits |= qualityBits(r.flags);
    } else {
      s.trusted++;
      // for-in reads the values the result has straight off its layout; a result has about 20 of the 32.
      const values = r.values as Record<string, number>;
      const places = g.quantities;
      let i = 0;
      for (const name in values) foldValue(s, places.at(i++, name), values[name], r.timeMs);
    }
    noteFolded(series, r.timeMs, r.seq);
    if (inWindow(g.window, r.timeMs)) this.writeWindowed(r);
    else if (g.ring !== null) {
      ringDropBefore(g.ring, r.timeMs - this.cfg.beforeMs - RING_SLACK_MS);
      ringPush(g.ring, r);
    }
  }

  private storeRaw(f: LoggerFrame): void {
    const store = this.cfg.raw.store;
    if (store === 'off') return;
    const l = store === 'summary' ? this.loggers.get(f.loggerId) : undefined;
    if (l === undefined) { this.lines.raw(f); return; }
    const place = placeSample(l.series, f.timeMs, f.seq);
    if (place === 'late') { this.counts.lateResults++; this.lines.raw(f); return; }
    const s = l.series.stats;
    if (place === 'close') {
      this.writeRawSummaryOf(l);
      closeInterval(l.series, f.timeMs);
    }
    s.trusted++;
    const channels = l.channels;
    for (let q = 0; q < channels.length; q++) {
      const v = f.values.get(channels[q]);
      if (v !== null && v !== undefined && Number.isFinite(v)) foldValue(s, q, v, f.timeMs);
    }
    foldValue(s, channels.length, f.arrivalMs - f.timeMs, f.timeMs);
    noteFolded(l.series, f.timeMs, f.seq);
  }

  /** Writes every open interval whose logger is silent (all of them with `all`). */
  private closeSilent(all: boolean): void {
    for (const g of this.groups.values()) {
      if (g.series === null || !isOpen(g.series) || !(all || this.silent(g.loggerId))) continue;
      this.writeSummary(g);
      closeInterval(g.series, Number.NaN);
    }
    for (const [loggerId, l] of this.loggers) {
      if (!isOpen(l.series) || !(all || this.silent(loggerId))) continue;
      this.writeRawSummaryOf(l);
      closeInterval(l.series, Number.NaN);
    }
  }
}

/** The groups an alarm is about: its group, its channel's group, every group of its logger; none for a component. */
function subjectGroups(subject: AlarmSubject, cfg: CompiledStorage): string[] {
  if (subject.kind === 'group') return [subject.groupId];
  if (subject.kind === 'channel') return subject.groupId === null ? [] : [subject.groupId];
  if (subject.kind === 'logger') return [...cfg.groups.values()].filter((g) => g.loggerId === subject.loggerId).map((g) => g.groupId);
  return [];
}

/**
 * Takes a previous run's state over. Returns the series whose interval changed in the
 * configuration: the caller writes each as it stood, then it starts afresh with the new interval.
 */
function restore(state: StorageState | undefined, groups: Map<string, GroupStore>, loggers: Map<string, LoggerStore>): Array<{ series: SummarySeries; intervalMs: number }> {
  const stale: Array<{ series: SummarySeries; intervalMs: number }> = [];
  if (state === undefined) return stale;
  const take = (series: SummarySeries, saved: StorageState['loggers'][string]) => {
    const intervalMs = series.intervalMs;
    seriesFromJson(series, saved);
    if (saved.intervalMs !== intervalMs) stale.push({ series, intervalMs });
  };
  for (const [id, saved] of Object.entries(state.groups)) {
    const g = groups.get(id);
    if (g === undefined) continue;
    if (saved.window !== null) { g.window.startMs = saved.window[0]; g.window.endMs = saved.window[1]; }
    if (saved.series !== null && g.series !== null) take(g.series, saved.series);
  }
  for (const [id, saved] of Object.entries(state.loggers)) {
    const l = loggers.get(id);
    if (l !== undefined) take(l.series, saved);
  }
  return stale;
}
