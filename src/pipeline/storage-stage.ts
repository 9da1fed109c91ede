import { Observable, type OperatorFunction, type SchedulerLike } from 'rxjs';
import type { AlarmSubject, AlarmTransition } from '../alarms/types.js';
import { newSampleWindow, pushSample, slopePerS, type SampleWindow } from '../alarms/engine/sample-window.js';
import { RING_SLACK_MS, type CompiledStorage, type CompiledTrigger } from '../config/compile-storage.js';
import type { LineBlock } from '../model/point.js';
import { qualityBits } from '../model/quality.js';
import type { LoggerFrame } from '../model/raw-message.js';
import { RESULT_QUANTITIES, type GroupResult } from '../model/result.js';
import { inWindow, newResultRing, newWindowSpan, openWindow, ringDropBefore, ringPush, ringTakeFrom, type ResultRing, type WindowSpan } from './event-windows.js';
import { frameLineWriter, type FrameLineOptions } from './frame-lines.js';
import type { FrameOutput } from './process-frames.js';
import { StorageGate, type GatedAck } from './storage-gate.js';
import { STORAGE_STATE_VERSION, type StorageState } from './storage-state.js';
import {
  closeInterval, foldValue, isOpen, newSummarySeries, noteFolded, placeSample, seriesFromJson, seriesToJson, type SummarySeries,
} from './summary-accumulator.js';
import { intervalTag, rawSummaryKeys, writeRawSummary, writeResultSummary } from './summary-lines.js';

/** What the storage stage takes: the processed stream, and alarm transitions as the engine makes them. */
export type StorageInput<M> = FrameOutput<M> | { kind: 'alarm'; transitions: readonly AlarmTransition[] };

/** A block for the write stage; acknowledging it tells the gate its lines are durable. */
export interface StoredBlock {
  kind: 'encoded';
  block: LineBlock;
  message: GatedAck;
  /** Logger time of the frame, or of the newest line, epoch ms. */
  timeMs: number;
}

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

export interface StorageStageDeps {
  storage: CompiledStorage;
  structureId: string;
  lines?: FrameLineOptions;
  /** State from a previous run (the storage state file). */
  restored?: StorageState;
  /** Persists the state before messages are acknowledged (live, with a state file); absent: nothing persisted. */
  persist?: (json: string) => Promise<void>;
  /** true: open intervals are written at completion (replay); false: they stay in the persisted state for the next start. */
  flushOnComplete: boolean;
  /** Once this emits (stop), a checkpoint that fails is not retried (its messages stay unacknowledged, delivered again next start). */
  until?: Observable<unknown>;
  counts?: StorageCounts;
  onError?: (err: unknown) => void;
  /** With `persist`: states are taken at most once per `ms` of this scheduler's clock (each is a JSON of every open interval). */
  checkpointSpacing?: { ms: number; scheduler: SchedulerLike };
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
 * What goes to the database, per the structure's `storage` section, the same live and in replay:
 * `full` groups' results as they are; `summary` groups folded into statistics per interval of
 * logger time (written when a later result or silence closes the interval), with every result of
 * an event window at full rate (the part before the trigger from the group's ring); raw readings
 * full, summarised or not at all. Output order depends only on the input order. Each message is
 * acknowledged through the StorageGate once its lines and the state holding its folds are durable.
 */
export function storageStage<M extends { ack(): void }>(deps: StorageStageDeps): OperatorFunction<StorageInput<M>, StoredBlock> {
  const { storage: cfg } = deps;
  const counts = deps.counts ?? newStorageCounts();
  return (source) => new Observable<StoredBlock>((subscriber) => {
    const w = frameLineWriter(deps.lines);
    // Summary lines of closed intervals go apart (below): their own blocks, kept in the state until durable.
    const sw = frameLineWriter(deps.lines);
    const unwritten = new Map<number, string>();
    let nextUnwritten = 0;
    const groups = new Map<string, GroupStore>();
    const loggers = new Map<string, LoggerStore>();
    for (const g of cfg.groups.values()) {
      const summary = g.summaryIntervalMs !== null;
      const triggers = cfg.triggers.filter((t) => t.groups.has(g.groupId));
      groups.set(g.groupId, {
        loggerId: g.loggerId,
        series: summary ? newSummarySeries(Q, g.summaryIntervalMs!) : null,
        key: summary ? w.seriesKey('sw_summary', [['structure', deps.structureId], ['group', g.groupId], ['zone', g.zone], ['logger', g.loggerId], ['interval', intervalTag(g.summaryIntervalMs!)]]) : null,
        ring: summary && g.ringCapacity > 0 ? newResultRing(deps.structureId, g.groupId, g.zone, g.loggerId, g.elementGauges, g.ringCapacity) : null,
        window: newWindowSpan(), triggers, rates: triggers.map(() => newSampleWindow()),
      });
    }
    if (cfg.raw.store === 'summary') {
      for (const [loggerId, channels] of cfg.loggerChannels) {
        loggers.set(loggerId, {
          series: newSummarySeries(channels.length + 1, cfg.raw.intervalMs), channels, keys: rawSummaryKeys(channels),
          key: w.seriesKey('sw_raw_summary', [['structure', deps.structureId], ['logger', loggerId], ['interval', intervalTag(cfg.raw.intervalMs)]]),
        });
      }
    }
    counts.ringBytes = [...groups.values()].reduce((s, g) => s + (g.ring?.data.byteLength ?? 0), 0);
    let clockMs = Number.NEGATIVE_INFINITY;
    let startClockMs = Number.NaN;
    let lastTimeMs = 0;
    // Per logger: frames received and not yet computed (held for temperature or a reading's verdict), and the clock at the last arrival.
    const pending = new Map<string, number>();
    const lastArrivalMs = new Map<string, number>();
    /** Nothing more can come for the logger's open intervals: nothing held, and silent for closeAfterMs (counted from this start at first). */
    const silent = (loggerId: string): boolean => (pending.get(loggerId) ?? 0) === 0 && clockMs - (lastArrivalMs.get(loggerId) ?? startClockMs) >= cfg.closeAfterMs;

    const snapshot = (): string => {
      const state: StorageState = { version: STORAGE_STATE_VERSION, structure: deps.structureId, groups: {}, loggers: {}, unwritten: [] };
      for (const [id, g] of groups) {
        state.groups[id] = { series: g.series ? seriesToJson(g.series) : null, window: Number.isNaN(g.window.startMs) ? null : [g.window.startMs, g.window.endMs] };
      }
      for (const [id, l] of loggers) state.loggers[id] = seriesToJson(l.series);
      state.unwritten = [...unwritten.values()];
      return JSON.stringify(state);
    };
    const gate = new StorageGate(snapshot, deps.persist ?? null, deps.onError, deps.persist === undefined ? null : deps.checkpointSpacing ?? null);
    const syncCounts = () => {
      counts.checkpoints = gate.counts.checkpoints;
      counts.checkpointFailures = gate.counts.checkpointFailures;
      let over = 0;
      for (const g of groups.values()) over += g.ring?.overwritten ?? 0;
      counts.ringOverwritten = over;
    };
    /**
     * Summary lines of intervals closed since the last take, as a block of their own: not in the
     * gate's epoch (a message waits for no database answer to an interval it was folded into
     * earlier), but in every state taken until it is durable, so a restart writes it again.
     */
    const emitSummaries = (text: string | null, timeMs: number) => {
      const block = text === null ? sw.take() : { text, lines: text.split('\n').length };
      if (block.lines === 0) return;
      const id = nextUnwritten++;
      unwritten.set(id, block.text);
      subscriber.next({ kind: 'encoded', block, message: { ack: () => { unwritten.delete(id); }, nack: () => {} }, timeMs });
    };
    /** Emits what was written since the last take, releasing `message` once persisted (null: none). */
    const emit = (message: { ack(): void } | null, timeMs: number) => {
      emitSummaries(null, timeMs);
      const block = w.take();
      const gated = gate.item(message);
      if (block.lines === 0) gated.ack();
      else subscriber.next({ kind: 'encoded', block, message: gated, timeMs });
    };

    const writeWindowed = (r: GroupResult) => { w.result(r); counts.windowResults++; };
    /** A trigger at tMs in group `groupId`: the window of every group it covers opens or grows. */
    const fire = (groupId: string, tMs: number) => {
      for (const id of cfg.windowGroups.get(groupId) ?? []) {
        const g = groups.get(id);
        if (g === undefined || g.series === null) continue; // a full group stores everything anyway
        const { merged, fromMs } = openWindow(g.window, tMs, cfg.beforeMs, cfg.afterMs);
        if (!merged) counts.windowsOpened++;
        if (g.ring !== null) ringTakeFrom(g.ring, fromMs, writeWindowed);
      }
    };
    const checkTriggers = (r: GroupResult, g: GroupStore) => {
      if (r.flags.length > 0) return; // a doubtful value opens no window (its health alarm does)
      for (let i = 0; i < g.triggers.length; i++) {
        const t = g.triggers[i];
        const v = r.values[t.quantity];
        if (v === undefined) continue;
        if (t.kind === 'level') {
          if (v > t.above || v < t.below) fire(r.groupId, r.timeMs);
          continue;
        }
        pushSample(g.rates[i], r.timeMs, v, t.windowMs, t.windowMs / 200);
        const slope = slopePerS(g.rates[i], t.windowMs / 2);
        if (slope !== null && Math.abs(slope) > t.ratePerS) fire(r.groupId, r.timeMs);
      }
    };
    const storeResult = (r: GroupResult) => {
      const g = groups.get(r.groupId);
      const series = g?.series ?? null;
      if (g === undefined || series === null) { w.result(r); return; }
      const place = placeSample(series, r.timeMs, r.seq);
      if (place === 'late') { counts.lateResults++; w.result(r); return; }
      const s = series.stats;
      if (place === 'close') {
        writeResultSummary(sw, g.key!, s);
        counts.summaryLines++;
        closeInterval(series, r.timeMs);
      }
      if (r.flags.length > 0) {
        s.flagged++;
        s.flagBits |= qualityBits(r.flags);
      } else {
        s.trusted++;
        // for-in reads the values the result has straight off its layout; a result has about 20 of the 32.
        const values = r.values as Record<string, number>;
        for (const name in values) foldValue(s, QUANTITY_INDEX.get(name)!, values[name], r.timeMs);
      }
      noteFolded(series, r.timeMs, r.seq);
      if (inWindow(g.window, r.timeMs)) writeWindowed(r);
      else if (g.ring !== null) {
        ringDropBefore(g.ring, r.timeMs - cfg.beforeMs - RING_SLACK_MS);
        ringPush(g.ring, r);
      }
    };
    const storeRaw = (f: LoggerFrame) => {
      if (cfg.raw.store === 'full') { w.raw(f); return; }
      if (cfg.raw.store === 'off') return;
      const l = loggers.get(f.loggerId);
      if (l === undefined) { w.raw(f); return; }
      const place = placeSample(l.series, f.timeMs, f.seq);
      if (place === 'late') { counts.lateResults++; w.raw(f); return; }
      const s = l.series.stats;
      if (place === 'close') {
        writeRawSummary(sw, l.key, l.keys, s);
        counts.rawSummaryLines++;
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
    };
    /** Writes every open interval whose logger is silent (all of them with `all`). */
    const closeSilent = (all: boolean) => {
      for (const g of groups.values()) {
        if (g.series === null || !isOpen(g.series) || !(all || silent(g.loggerId))) continue;
        writeResultSummary(sw, g.key!, g.series.stats);
        counts.summaryLines++;
        closeInterval(g.series, Number.NaN);
      }
      for (const [loggerId, l] of loggers) {
        if (!isOpen(l.series) || !(all || silent(loggerId))) continue;
        writeRawSummary(sw, l.key, l.keys, l.series.stats);
        counts.rawSummaryLines++;
        closeInterval(l.series, Number.NaN);
      }
    };
    const onAlarms = (transitions: readonly AlarmTransition[]) => {
      if (!cfg.onAlarms || !cfg.anySummary) return;
      for (const t of transitions) {
        if (!WINDOW_KINDS.has(t.kind)) continue;
        for (const id of subjectGroups(t.alarm.subject, cfg)) fire(id, t.atMs);
      }
    };

    // Lines a previous run closed and had not seen durable: written again (the same bytes, the same points).
    for (const text of deps.restored?.unwritten ?? []) emitSummaries(text, lastTimeMs);
    // A series whose interval was changed since the state was saved: written as it stood, then restarted.
    for (const { series, intervalMs } of restore(deps.restored, groups, loggers)) {
      if (!Number.isNaN(series.stats.startMs)) {
        const g = [...groups.values()].find((x) => x.series === series);
        const l = [...loggers.values()].find((x) => x.series === series);
        if (g !== undefined) { writeResultSummary(sw, g.key!, series.stats); counts.summaryLines++; }
        if (l !== undefined) { writeRawSummary(sw, l.key, l.keys, series.stats); counts.rawSummaryLines++; }
      }
      closeInterval(series, Number.NaN);
      series.intervalMs = intervalMs;
    }
    emit(null, lastTimeMs);
    gate.poke();

    const until = deps.until?.subscribe(() => gate.stop());
    const upstream = source.subscribe({
      next(input) {
        if (input.kind === 'alarm') {
          onAlarms(input.transitions);
          emit(null, lastTimeMs);
        } else if (input.kind === 'tick') {
          if (input.nowMs > clockMs) clockMs = input.nowMs;
          if (Number.isNaN(startClockMs)) startClockMs = clockMs;
          closeSilent(false);
          emit(null, lastTimeMs);
        } else if (input.kind === 'received') {
          const f = input.frame;
          if (f.arrivalMs > clockMs) clockMs = f.arrivalMs;
          if (Number.isNaN(startClockMs)) startClockMs = clockMs;
          pending.set(f.loggerId, (pending.get(f.loggerId) ?? 0) + 1);
          lastArrivalMs.set(f.loggerId, clockMs);
        } else if (input.kind === 'frame') {
          const loggerId = input.frame.loggerId;
          pending.set(loggerId, (pending.get(loggerId) ?? 1) - 1);
          const results = input.results;
          for (let i = 0; i < results.length; i++) {
            const g = groups.get(results[i].groupId);
            if (g !== undefined && g.triggers.length > 0) checkTriggers(results[i], g);
          }
          for (let i = 0; i < results.length; i++) storeResult(results[i]);
          storeRaw(input.frame);
          lastTimeMs = input.frame.timeMs;
          emit(input.message, lastTimeMs);
        }
        gate.poke();
        syncCounts();
      },
      error: (err) => subscriber.error(err),
      complete() {
        if (deps.flushOnComplete) closeSilent(true);
        emit(null, lastTimeMs);
        gate.poke();
        gate.drained().then(() => { syncCounts(); subscriber.complete(); }, (err: unknown) => subscriber.error(err));
      },
    });
    return () => {
      upstream.unsubscribe();
      until?.unsubscribe();
    };
  });
}

/**
 * The storage stage's input: the processed stream with the alarm transitions merged in as the
 * engine makes them (subscribe the alarms to `processed$` first, so a transition comes before the
 * output that caused it). Completes with `processed$`.
 */
export function storageInputs<M>(processed$: Observable<FrameOutput<M>>, transitions$?: Observable<readonly AlarmTransition[]>): Observable<StorageInput<M>> {
  return new Observable<StorageInput<M>>((subscriber) => {
    const alarms = transitions$?.subscribe((transitions) => subscriber.next({ kind: 'alarm', transitions }));
    const outputs = processed$.subscribe({
      next: (o) => subscriber.next(o),
      error: (err) => subscriber.error(err),
      complete: () => { alarms?.unsubscribe(); subscriber.complete(); },
    });
    return () => { alarms?.unsubscribe(); outputs.unsubscribe(); };
  });
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
