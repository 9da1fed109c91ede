import type { AckRefusal, Alarm, AlarmLookups, AlarmTransition } from '../../alarms/types.js';
import type { LoggerFrame } from '../../model/raw-message.js';
import type { GroupResult, ResultQuantity } from '../../model/result.js';
import { TrendRing } from './trend-ring.js';
import type { PageFatigue } from './fatigue-view.js';

/** What the page shows of a group besides its numbers (from the structure configuration). */
export interface PageGroupInfo {
  id: string;
  zone: string;
  location: string;
  /** plane_rosette, solid_cluster, single. */
  kind: string;
  material: string;
  /** Thresholds of the limit rules on von Mises stress (above) that cover the group, MPa, lowest first: drawn on the trend. */
  vonMisesLimits: Array<{ level: string; value: number }>;
}

/** The processor's own counters, sampled by the composition root (cumulative since start). */
export interface ProcessorSample {
  messages: number;
  frames: number;
  results: number;
  rejected: number;
  writeErrors: number;
  /** Backlog: messages received whose PUBACK waits for their results to be durable (frames waiting for a temperature included). */
  heldAcks: number;
  /** false: results go to line-protocol files. */
  databaseConfigured: boolean;
  /** null: not known yet, or no database. */
  databaseReachable: boolean | null;
  spoolFillRatio: number | null;
}

/** Everything the page's state changes on; each carries its own time, so the reducer reads no clock. */
export type PageEvent =
  | { type: 'result'; result: GroupResult }
  | { type: 'frame'; frame: LoggerFrame }
  | { type: 'tick'; nowMs: number }
  | { type: 'alarm_transitions'; transitions: readonly AlarmTransition[] }
  /** The engine's visible alarms as restored from its state file at start. */
  | { type: 'alarms_restored'; alarms: readonly Alarm[] }
  | { type: 'refusal'; refusal: AckRefusal }
  | { type: 'processor'; atMs: number; sample: ProcessorSample }
  /** The fatigue figures now (replacing the last ones). */
  | { type: 'fatigue'; fatigue: PageFatigue };

interface GroupState {
  info: PageGroupInfo;
  latest: GroupResult | null;
  trend: TrendRing;
}

interface ChannelState {
  id: string;
  unit: string;
  location: string;
  groupId: string | null;
  validMin: number;
  validMax: number;
  lastValue: number | null;
  lastSeenMs: number | null;
  nulls: number;
  outOfRange: boolean;
}

interface LoggerState {
  id: string;
  zone: string;
  location: string;
  expectedIntervalS: number;
  frames: number;
  lastArrivalMs: number | null;
  lastTimeMs: number | null;
  lastSeq: number | null;
  /** Scans missing by sequence number. */
  seqGaps: number;
  channels: Map<string, ChannelState>;
}

/** The page's whole state; bounded: one entry per configured group, logger and channel, a fixed trend per group, the visible alarms, the last refusals. */
export interface PageState {
  structureId: string;
  structureName: string;
  /** Shown on top of the page (e.g. that the data is simulated); null for none. */
  notice: string | null;
  /** Length of each trend, s. */
  trendS: number;
  /** Pipeline clock: latest tick or frame arrival, epoch ms. */
  clockMs: number;
  groups: Map<string, GroupState>;
  loggers: Map<string, LoggerState>;
  alarms: Map<string, Alarm>;
  refusals: AckRefusal[];
  processor: { atMs: number; sample: ProcessorSample; rates: { messagesPerS: number; resultsPerS: number; rejectedPerS: number } | null } | null;
  /** Recent processor samples, oldest first, over at most RATE_WINDOW_MS: rates are averaged over them. */
  samples: Array<{ atMs: number; sample: ProcessorSample }>;
  /** The latest fatigue figures (one entry per configured detail); null without fatigue or before any result. */
  fatigue: PageFatigue | null;
}

/** Rates are averaged over this long (results come in bursts when held frames get their temperature). */
export const RATE_WINDOW_MS = 10_000;

/** Refusals kept for the page (newest first). */
export const MAX_REFUSALS = 20;

/** A fresh state: every configured group and logger, nothing received yet. Trend: `trend_s` seconds in buckets of `bucket_ms`. */
export function initialPageState(
  structure: { structureId: string; name: string; groups: readonly PageGroupInfo[] }, lookups: AlarmLookups, trend_s: number, bucket_ms = 1000, notice: string | null = null,
): PageState {
  const capacity = Math.max(2, Math.ceil((trend_s * 1000) / bucket_ms));
  const groups = new Map(structure.groups.map((g) => [g.id, { info: g, latest: null, trend: new TrendRing(capacity, bucket_ms) }]));
  const loggers = new Map<string, LoggerState>();
  for (const [id, l] of lookups.loggers) {
    const channels = new Map<string, ChannelState>();
    for (const [cid, c] of l.channels) {
      channels.set(cid, { id: cid, unit: c.unit, location: c.location, groupId: c.groupId, validMin: c.validMin, validMax: c.validMax, lastValue: null, lastSeenMs: null, nulls: 0, outOfRange: false });
    }
    loggers.set(id, { id, zone: l.zone, location: l.location, expectedIntervalS: l.expectedIntervalS, frames: 0, lastArrivalMs: null, lastTimeMs: null, lastSeq: null, seqGaps: 0, channels });
  }
  return { structureId: structure.structureId, structureName: structure.name, notice, trendS: trend_s, clockMs: Number.NEGATIVE_INFINITY, groups, loggers, alarms: new Map(), refusals: [], processor: null, samples: [], fatigue: null };
}

/**
 * Applies one event. Deterministic, no I/O and no clock; it updates `state` in place (the trend
 * rings are preallocated and reused) and returns it. Unknown groups and loggers are ignored: the
 * decoder has already refused what the configuration does not know.
 */
export function reducePage(state: PageState, event: PageEvent): PageState {
  switch (event.type) {
    case 'result': {
      const g = state.groups.get(event.result.groupId);
      if (g === undefined) return state;
      g.latest = event.result;
      const v = event.result.values;
      const high = v.principal_1_MPa ?? v.stress_axial_MPa ?? Number.NaN;
      const low = v.principal_3_MPa ?? v.principal_2_MPa ?? v.stress_axial_MPa ?? Number.NaN;
      g.trend.add(event.result.timeMs, v.von_mises_MPa ?? Number.NaN, high, low);
      return state;
    }
    case 'frame': {
      const f = event.frame;
      state.clockMs = Math.max(state.clockMs, f.arrivalMs);
      const l = state.loggers.get(f.loggerId);
      if (l === undefined) return state;
      l.frames++;
      l.lastArrivalMs = f.arrivalMs;
      l.lastTimeMs = f.timeMs;
      if (f.seq !== null) {
        if (l.lastSeq !== null && f.seq > l.lastSeq + 1) l.seqGaps += f.seq - l.lastSeq - 1;
        l.lastSeq = f.seq;
      }
      for (const [cid, value] of f.values) {
        const c = l.channels.get(cid);
        if (c === undefined) continue;
        c.lastValue = value;
        c.lastSeenMs = f.arrivalMs;
        if (value === null) c.nulls++;
        c.outOfRange = value !== null && (value < c.validMin || value > c.validMax);
      }
      return state;
    }
    case 'tick':
      state.clockMs = Math.max(state.clockMs, event.nowMs);
      return state;
    case 'alarms_restored':
      for (const a of event.alarms) if (a.state !== 'closed') state.alarms.set(a.id, a);
      return state;
    case 'alarm_transitions':
      for (const t of event.transitions) {
        if (t.alarm.state === 'closed') state.alarms.delete(t.alarm.id);
        else state.alarms.set(t.alarm.id, t.alarm);
      }
      return state;
    case 'refusal':
      state.refusals.unshift(event.refusal);
      if (state.refusals.length > MAX_REFUSALS) state.refusals.length = MAX_REFUSALS;
      return state;
    case 'processor': {
      const samples = state.samples;
      samples.push({ atMs: event.atMs, sample: event.sample });
      while (samples.length > 2 && event.atMs - samples[1].atMs >= RATE_WINDOW_MS) samples.shift();
      const first = samples[0];
      const dt = (event.atMs - first.atMs) / 1000;
      const rates = dt <= 0 ? state.processor?.rates ?? null : {
        messagesPerS: (event.sample.messages - first.sample.messages) / dt,
        resultsPerS: (event.sample.results - first.sample.results) / dt,
        rejectedPerS: (event.sample.rejected - first.sample.rejected) / dt,
      };
      state.processor = { atMs: event.atMs, sample: event.sample, rates };
      return state;
    }
    case 'fatigue':
      state.fatigue = event.fatigue;
      return state;
  }
}

/** Alarms as the page lists them: most severe level first, then structural before health, then newest. Returns a new array. */
export function orderedAlarms(alarms: Iterable<Alarm>): Alarm[] {
  return [...alarms].sort((a, b) => b.levelIndex - a.levelIndex
    || (a.alarmClass === b.alarmClass ? 0 : a.alarmClass === 'structural' ? -1 : 1)
    || b.sinceMs - a.sinceMs
    || (a.id < b.id ? -1 : 1));
}

/** The quantities the page shows (the rest stays in the database): a page update stays small with hundreds of groups. */
export const PAGE_QUANTITIES = [
  'principal_1_MPa', 'principal_2_MPa', 'principal_3_MPa', 'principal_angle_deg', 'principal_1_dir_x', 'principal_1_dir_y', 'principal_1_dir_z',
  'stress_axial_MPa', 'von_mises_MPa', 'ratio_von_mises_to_yield', 'ratio_tension_to_tensile_strength', 'ratio_compression_to_compressive_strength',
  'temperature_degC',
] as const satisfies readonly ResultQuantity[];

function shownValues(values: GroupResult['values']): GroupResult['values'] {
  const out: GroupResult['values'] = {};
  for (const q of PAGE_QUANTITIES) if (values[q] !== undefined) out[q] = values[q];
  return out;
}

/** A logger's receiving state at the pipeline clock: silent after five expected intervals (the demo's no-data setting; the alarm engine decides the alarm). */
export function loggerStateAt(l: { lastArrivalMs: number | null; expectedIntervalS: number }, clockMs: number): { state: 'waiting' | 'receiving' | 'silent'; ageS: number | null } {
  if (l.lastArrivalMs === null) return { state: 'waiting', ageS: null };
  const ageS = Math.max(0, (clockMs - l.lastArrivalMs) / 1000);
  return { state: ageS > 5 * l.expectedIntervalS ? 'silent' : 'receiving', ageS };
}

/**
 * The page's JSON view: every group with its latest values and its trend buckets starting at or after
 * `trendSince(group)` (all of them for a new page; the last sent one and newer for an update), the visible alarms in page order,
 * instrument health, the processor. Allocates a new object; does not change `state`.
 */
export function pageView(state: PageState, trendSince: (groupId: string) => number): PageView {
  const clock = Number.isFinite(state.clockMs) ? state.clockMs : null;
  return {
    structureId: state.structureId,
    structureName: state.structureName,
    notice: state.notice,
    trendS: state.trendS,
    clockMs: clock,
    groups: [...state.groups.values()].map((g) => ({
      ...g.info,
      timeMs: g.latest?.timeMs ?? null,
      values: g.latest === null ? {} : shownValues(g.latest.values),
      flags: g.latest?.flags ?? [],
      trend: g.trend.since(trendSince(g.info.id)),
    })),
    alarms: orderedAlarms(state.alarms.values()),
    refusals: state.refusals,
    loggers: [...state.loggers.values()].map((l) => ({
      id: l.id, zone: l.zone, location: l.location, expectedIntervalS: l.expectedIntervalS, frames: l.frames, seqGaps: l.seqGaps,
      lastTimeMs: l.lastTimeMs, ...loggerStateAt(l, clock ?? Number.NEGATIVE_INFINITY),
      channels: [...l.channels.values()].map((c) => ({
        id: c.id, unit: c.unit, groupId: c.groupId, lastValue: c.lastValue, nulls: c.nulls, outOfRange: c.outOfRange,
        ageS: c.lastSeenMs === null || clock === null ? null : Math.max(0, (clock - c.lastSeenMs) / 1000),
      })),
    })),
    processor: state.processor === null ? null : { ...state.processor.sample, rates: state.processor.rates },
    fatigue: state.fatigue,
  };
}

export interface PageView {
  structureId: string;
  structureName: string;
  notice: string | null;
  trendS: number;
  clockMs: number | null;
  groups: Array<PageGroupInfo & { timeMs: number | null; values: GroupResult['values']; flags: readonly string[]; trend: Array<[number, number | null, number | null, number | null]> }>;
  alarms: Alarm[];
  refusals: AckRefusal[];
  loggers: Array<{
    id: string; zone: string; location: string; expectedIntervalS: number; frames: number; seqGaps: number; lastTimeMs: number | null;
    state: 'waiting' | 'receiving' | 'silent'; ageS: number | null;
    channels: Array<{ id: string; unit: string; groupId: string | null; lastValue: number | null; nulls: number; outOfRange: boolean; ageS: number | null }>;
  }>;
  processor: (ProcessorSample & { rates: { messagesPerS: number; resultsPerS: number; rejectedPerS: number } | null }) | null;
  fatigue: PageFatigue | null;
}
