import { Observable, type OperatorFunction, type SchedulerLike } from 'rxjs';
import type { AlarmTransition } from '../alarms/types.js';
import type { CompiledStorage } from '../config/compile-storage.js';
import { lineBlockOf, lineBlockText, type LineBlock } from '../model/point.js';
import type { FrameLineOptions } from './frame-lines.js';
import type { FrameOutput } from './process-frames.js';
import { StorageGate, type GatedAck } from './storage-gate.js';
import { newStorageCounts, StorageKeeper, type StorageCounts } from './storage-keeper.js';
import type { StorageState } from './storage-state.js';

export { newStorageCounts, type StorageCounts } from './storage-keeper.js';

/** What the storage stage takes: the processed stream, and alarm transitions as the engine makes them. */
export type StorageInput<M> = FrameOutput<M> | { kind: 'alarm'; transitions: readonly AlarmTransition[] };

/** A block for the write stage; acknowledging it tells the gate its lines are durable. */
export interface StoredBlock {
  kind: 'encoded';
  block: LineBlock;
  message: GatedAck;
  /** Logger time of the frame, or of the newest line, epoch ms. */
  timeMs: number;
  /** The frame's logger and its results, when the block is one frame's lines (absent: summaries, a window). */
  loggerId?: string;
  results?: number;
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

/**
 * What goes to the database, per the structure's `storage` section, the same live and in replay
 * (the decisions are StorageKeeper's): `full` groups' results as they are; `summary` groups folded
 * into statistics per interval of logger time, with every result of an event window at full rate;
 * raw readings full, summarised or not at all. Output order depends only on the input order. Each
 * message is acknowledged through the StorageGate once its lines and the state holding its folds
 * are durable. A closed interval's lines are a block of their own, outside the gate's epochs (no
 * message waits for the database's answer to an interval it was folded into earlier), kept in
 * every state taken until durable, so a restart writes them again.
 */
export function storageStage<M extends { ack(): void }>(deps: StorageStageDeps): OperatorFunction<StorageInput<M>, StoredBlock> {
  const counts = deps.counts ?? newStorageCounts();
  return (source) => new Observable<StoredBlock>((subscriber) => {
    const keeper = new StorageKeeper(deps.storage, deps.structureId, deps.lines, counts);
    const unwritten = new Map<number, string>();
    let nextUnwritten = 0;
    let lastTimeMs = 0;
    const gate = new StorageGate(() => keeper.snapshot([...unwritten.values()]), deps.persist ?? null, deps.onError,
      deps.persist === undefined ? null : deps.checkpointSpacing ?? null);
    const syncCounts = () => {
      counts.checkpoints = gate.counts.checkpoints;
      counts.checkpointFailures = gate.counts.checkpointFailures;
      counts.ringOverwritten = keeper.ringOverwritten();
    };
    const emitSummaries = (block: LineBlock) => {
      if (block.lines === 0) return;
      const id = nextUnwritten++;
      unwritten.set(id, lineBlockText(block));
      subscriber.next({ kind: 'encoded', block, message: { ack: () => { unwritten.delete(id); }, nack: () => {} }, timeMs: lastTimeMs });
    };
    /** Emits what the keeper wrote since the last take; the full-rate block releases `message` once persisted (null: none). */
    const emit = (message: { ack(): void } | null, of?: { loggerId: string; results: number }) => {
      emitSummaries(keeper.takeSummaries());
      const block = keeper.takeLines();
      const gated = gate.item(message);
      // A frame's block goes on even when its results were all folded into summaries (no line of
      // its own): the write stage's outcome for it is what counts the frame and its results written.
      if (block.lines === 0 && of === undefined) gated.ack();
      else subscriber.next({ kind: 'encoded', block, message: gated, timeMs: lastTimeMs, ...of });
    };

    // Lines a previous run closed and had not seen durable: written again (the same bytes, the same points).
    for (const text of deps.restored?.unwritten ?? []) emitSummaries(lineBlockOf(text, text.split('\n').length));
    if (deps.restored !== undefined) keeper.restore(deps.restored);
    emit(null);
    gate.poke();

    const until = deps.until?.subscribe(() => gate.stop());
    const upstream = source.subscribe({
      next(input) {
        if (input.kind === 'alarm') {
          keeper.alarms(input.transitions);
          emit(null);
        } else if (input.kind === 'tick') {
          keeper.tick(input.nowMs);
          emit(null);
        } else if (input.kind === 'received') {
          keeper.received(input.frame);
        } else if (input.kind === 'frame') {
          keeper.frame(input.frame, input.results);
          lastTimeMs = input.frame.timeMs;
          emit(input.message, { loggerId: input.frame.loggerId, results: input.results.length });
        }
        gate.poke();
        syncCounts();
      },
      error: (err) => subscriber.error(err),
      complete() {
        if (deps.flushOnComplete) keeper.closeAll();
        emit(null);
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

