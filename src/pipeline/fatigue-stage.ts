import { Observable, type OperatorFunction } from 'rxjs';
import type { CompiledFatigue, CompiledFatigueDetail, FatigueStressReader } from '../config/compile-fatigue.js';
import { detailFigures, detailFlagged, detailTrusted, newDetailState, type FatigueDetailState, type FatigueFigures } from '../fatigue/detail.js';
import type { GroupResult } from '../model/result.js';
import type { FrameOutput } from './process-frames.js';

/** The fatigue state of every detail, keyed by detail id (what the state file keeps). */
export type FatigueStates = Map<string, FatigueDetailState>;

/** Figures of every detail at one logger time: written to the database and the state file, shown on pages. */
export interface FatigueSnapshot {
  kind: 'fatigue';
  /** Logger time the figures are taken at, epoch ms: a boundary of the write grid, or the last result's time at the end. */
  nowMs: number;
  /** The last snapshot of the stream (the input completed). */
  final: boolean;
  details: { id: string; groupId: string; figures: FatigueFigures }[];
}

/** The detail's stress from a result, MPa; NaN when the result lacks it. */
export function readStress(r: FatigueStressReader, v: GroupResult['values']): number {
  if (r.kind === 'axial') return (v.stress_axial_MPa ?? NaN) * r.factor;
  if (r.kind === 'principal') return v[r.quantity] ?? NaN;
  // A zero coefficient needs no component (0 x a missing one would be NaN).
  return term(r.a, v.stress_xx_MPa) + term(r.b, v.stress_yy_MPa) + term(r.c, v.stress_xy_MPa);
}

function term(k: number, x: number | undefined): number {
  return k === 0 ? 0 : k * (x ?? NaN);
}

/**
 * Counts fatigue on the processed stream, the same live and in replay: only results without a
 * quality flag are counted; a flagged one breaks its detail's sequence (detail.ts). Snapshots are
 * taken on a grid of logger time (multiples of `writeIntervalMs` since the epoch): when the first
 * result at or past a boundary comes, the figures of everything before it are emitted, stamped
 * with the boundary. Logger time, not the arrival clock, so a replay gives exactly the live
 * snapshots whatever its ticks; while nothing arrives none is taken (no data is its own alarm).
 * One more snapshot at completion, at the latest logger time seen. `states` is mutated in place
 * (pass the restored state file's map to continue after a restart).
 */
export function fatigueStage<M>(cfg: CompiledFatigue, states: FatigueStates): OperatorFunction<FrameOutput<M>, FatigueSnapshot> {
  // Each group's details with their states, looked up once per result (the states are mutated, never replaced).
  const byGroup = new Map<string, { d: CompiledFatigueDetail; s: FatigueDetailState }[]>();
  for (const d of cfg.details) {
    if (!states.has(d.id)) states.set(d.id, newDetailState(d.params));
    byGroup.set(d.groupId, [...(byGroup.get(d.groupId) ?? []), { d, s: states.get(d.id)! }]);
  }
  const snapshot = (nowMs: number, final: boolean): FatigueSnapshot => ({
    kind: 'fatigue', nowMs, final,
    details: cfg.details.map((d) => ({ id: d.id, groupId: d.groupId, figures: detailFigures(states.get(d.id)!, d.params, nowMs) })),
  });
  const every = cfg.writeIntervalMs;
  return (source) => new Observable<FatigueSnapshot>((subscriber) => {
    let clockMs = Number.NEGATIVE_INFINITY;
    let nextWriteMs = Number.NaN;
    const advance = (t: number) => {
      if (!(t > clockMs)) return;
      clockMs = t;
      if (Number.isNaN(nextWriteMs)) nextWriteMs = (Math.floor(t / every) + 1) * every;
      else if (t >= nextWriteMs) {
        const boundary = Math.floor(t / every) * every;
        subscriber.next(snapshot(boundary, false));
        nextWriteMs = boundary + every;
      }
    };
    return source.subscribe({
      next(o) {
        if (o.kind !== 'frame') return;
        for (const r of o.results) {
          const ds = byGroup.get(r.groupId);
          if (ds === undefined) continue;
          advance(r.timeMs);
          for (let i = 0; i < ds.length; i++) {
            const { d, s } = ds[i];
            if (r.flags.length > 0) { detailFlagged(s); continue; }
            const x = readStress(d.reader, r.values);
            if (Number.isFinite(x)) detailTrusted(s, d.params, r.timeMs, x);
            else detailFlagged(s);
          }
        }
      },
      error: (e) => subscriber.error(e),
      complete() {
        if (Number.isFinite(clockMs)) subscriber.next(snapshot(clockMs, true));
        subscriber.complete();
      },
    });
  });
}
