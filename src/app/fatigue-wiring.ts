import { Subject, type Observable } from 'rxjs';
import type { CompiledFatigue } from '../config/compile-fatigue.js';
import { detailFigures, remainingLifeYears, REMAINING_LIFE_ASSUMPTIONS } from '../fatigue/detail.js';
import type { PointWriter } from '../model/point.js';
import { fatigueStage, type FatigueSnapshot, type FatigueStates } from '../pipeline/fatigue-stage.js';
import type { FrameOutput } from '../pipeline/process-frames.js';
import type { FatigueInput } from '../alarms/types.js';
import type { CompiledStructure } from '../config/compile.js';
import type { ComponentFault } from '../alarms/types.js';
import { fatiguePoints } from './fatigue-points.js';
import { saveSnapshot } from '../alarms/persistence/snapshot-file.js';
import { openFatigueStates, serialiseFatigueStates } from './fatigue-state-file.js';

export interface FatigueWiringDeps {
  cfg: CompiledFatigue;
  structureId: string;
  /** Zone of a group (a tag of every point). */
  zoneOf: (groupId: string) => string;
  /** Where a detail is, for alarms and pages: its own `location`, else its group's. */
  locationOf: (detailId: string) => string;
  /** Restored states (`openFatigueStates`), mutated in place; a new map starts from nothing. */
  states: FatigueStates;
  /** State file rewritten at every snapshot and at the end (absent: not persisted). */
  statePath?: string;
  /** Where `sw_fatigue` points go (not closed here: it is shared). */
  sink?: PointWriter;
  /** Extra tags on every point, e.g. `{ run: 'replay-3' }`. */
  pointTags?: Readonly<Record<string, string>>;
  /** Each snapshot, as taken (live page). */
  onSnapshot?: (s: FatigueSnapshot) => void;
  /** A failed write or save, for the application log; counting goes on. */
  onError?: (event: string, err: unknown) => void;
}

/** Counters of the fatigue wiring. */
export interface FatigueCounts {
  snapshots: number;
  errors: { points: number; state: number };
}

export interface FatigueWiring {
  /** Alarm inputs, one per snapshot (`attachAlarms`' `fatigue$`); completes with the stream. */
  alarmInputs$: Observable<FatigueInput>;
  /** The last snapshot taken; null before the first. */
  latest(): FatigueSnapshot | null;
  /** Figures now, between snapshots (the live page), at the last trusted result's logger time; null before any. Allocates. */
  current(): FatigueSnapshot | null;
  counts(): FatigueCounts;
  /** A short per-detail summary for status lines and --json (remaining life with its assumptions). */
  status(): FatigueStatus | null;
  /** Waits for the stream's end (its final snapshot) and for every write and save. Idempotent. */
  close(): Promise<void>;
}

export interface FatigueStatus {
  at: string;
  details: { detail: string; group: string; damage: number; damage_per_day: number | null; remaining_life_years: number | 'unbounded' | null; not_monitored_s: number }[];
  remaining_life_assumptions: readonly string[];
}

/**
 * Fatigue on the processed stream, the same live and in replay: the stage counts (fatigue-stage.ts),
 * and each snapshot (on the logger-time grid) is written as `sw_fatigue` points, saved to the state
 * file and handed to the alarms, strictly in order. Subscribes at once. A failed write or save is
 * counted and reported; the counting never stops for it.
 */
export function attachFatigue(processed$: Observable<FrameOutput<unknown>>, deps: FatigueWiringDeps): FatigueWiring {
  const c: FatigueCounts = { snapshots: 0, errors: { points: 0, state: 0 } };
  const report = (event: string, err: unknown): void => { try { deps.onError?.(event, err); } catch { /* reporting must not stop counting */ } };
  const alarmInputs$ = new Subject<FatigueInput>();
  let latest: FatigueSnapshot | null = null;
  // Writes and saves queue behind each other: the state file never goes back to an older snapshot.
  let queue: Promise<void> = Promise.resolve();
  const persist = (s: FatigueSnapshot): void => {
    const points = deps.sink === undefined ? [] : fatiguePoints(s, deps.cfg, deps.structureId, deps.zoneOf, deps.pointTags);
    // Serialised now, at the snapshot: later counting must not leak into this save.
    const path = deps.statePath;
    const text = path === undefined ? null : serialiseFatigueStates(deps.states);
    const save = path === undefined || text === null ? null : () => saveSnapshot(path, text);
    queue = queue.then(async () => {
      if (points.length > 0) await deps.sink!.write(points).catch((err: unknown) => { c.errors.points++; report('fatigue_points_failed', err); });
      if (save !== null) await save().catch((err: unknown) => { c.errors.state++; report('fatigue_state_failed', err); });
    });
  };
  let resolveDone: () => void = () => {};
  const done = new Promise<void>((r) => { resolveDone = r; });
  processed$.pipe(fatigueStage(deps.cfg, deps.states)).subscribe({
    next(s) {
      latest = s;
      c.snapshots++;
      persist(s);
      try { deps.onSnapshot?.(s); } catch (err) { report('fatigue_observer_failed', err); }
      alarmInputs$.next({
        type: 'fatigue', atMs: s.nowMs,
        details: s.details.map((d) => ({ detailId: d.id, groupId: d.groupId, location: deps.locationOf(d.id), damage: d.figures.damage, damagePerDay: d.figures.damagePerDay, rateWindowS: d.figures.rateWindowS })),
      });
    },
    error(err: unknown) { report('fatigue_stream_failed', err); alarmInputs$.complete(); resolveDone(); },
    complete() { alarmInputs$.complete(); resolveDone(); },
  });
  let closed: Promise<void> | null = null;
  return {
    alarmInputs$,
    latest: () => latest,
    current: () => {
      let at = Number.NEGATIVE_INFINITY;
      for (const d of deps.cfg.details) {
        const t = deps.states.get(d.id)?.lastTrustedMs ?? Number.NaN;
        if (t > at) at = t;
      }
      if (!Number.isFinite(at)) return latest;
      return {
        kind: 'fatigue', nowMs: at, final: false,
        details: deps.cfg.details.map((d) => ({ id: d.id, groupId: d.groupId, figures: detailFigures(deps.states.get(d.id)!, d.params) })),
      };
    },
    counts: () => ({ snapshots: c.snapshots, errors: { ...c.errors } }),
    status: () => (latest === null ? null : fatigueStatus(latest)),
    close: () => {
      closed ??= (async () => { await done; await queue; })();
      return closed;
    },
  };
}

/**
 * A snapshot in the status line's words: null for a figure not known yet (no monitored time);
 * remaining life `unbounded` when no damage accrued over the rate window. Pure.
 */
export function fatigueStatus(s: FatigueSnapshot): FatigueStatus {
  const finite = (v: number): number | null => (Number.isFinite(v) ? v : null);
  return {
    at: new Date(s.nowMs).toISOString(),
    details: s.details.map(({ id, groupId, figures: f }) => ({
      detail: id, group: groupId, damage: f.damage, damage_per_day: finite(f.damagePerDay),
      remaining_life_years: lifeOf(remainingLifeYears(f.damage, f.damagePerDay)), not_monitored_s: f.notMonitoredS,
    })),
    remaining_life_assumptions: REMAINING_LIFE_ASSUMPTIONS,
  };
}

const lifeOf = (years: number): number | 'unbounded' | null => (years === Infinity ? 'unbounded' : Number.isFinite(years) ? years : null);

/** What `startFatigue` needs beyond the structure; the rest of `FatigueWiringDeps` is filled from it. */
export type FatigueStartDeps = Pick<FatigueWiringDeps, 'statePath' | 'sink' | 'pointTags' | 'onSnapshot' | 'onError'> & {
  /** Wall clock, epoch ms: only names a state file kept aside. */
  now: () => number;
  warn: (event: string, detail: Record<string, unknown>) => void;
};

/** Fatigue restored and ready to count: `attach` it to the processed stream before that stream starts. */
export interface PreparedFatigue {
  /** Operations alarms of a reset state, for the alarm wiring to take first. */
  startInputs: ComponentFault[];
  attach(processed$: Observable<FrameOutput<unknown>>): FatigueWiring;
}

/**
 * The one way live and replay set up fatigue: restore the state file (when given; before the
 * pipeline starts, so no output passes uncounted), then `attach` counts on the processed stream.
 * Null when the structure has no `fatigue` section.
 */
export async function prepareFatigue(structure: CompiledStructure, deps: FatigueStartDeps): Promise<PreparedFatigue | null> {
  const cfg = structure.fatigue;
  if (cfg === null || cfg === undefined) return null;
  const opened = deps.statePath === undefined ? { states: new Map(), startInputs: [] } : await openFatigueStates(cfg, deps.statePath, deps);
  const zones = new Map(structure.groups.map((g) => [g.config.id, g.config.zone]));
  const locations = new Map(cfg.details.map((d) => [d.id, d.location]));
  return {
    startInputs: opened.startInputs,
    attach: (processed$) => attachFatigue(processed$, {
      ...deps, cfg, structureId: structure.structureId, states: opened.states,
      zoneOf: (g) => zones.get(g) ?? '', locationOf: (d) => locations.get(d) ?? d,
    }),
  };
}
