/**
 * Acknowledgement after a checkpoint (group commit), so a restart neither loses nor counts twice
 * what the summaries hold. Every block the storage stage emits is an item of the current epoch.
 * An epoch is sealed (the stage's state taken as JSON, synchronously, between two inputs) when no
 * other sealed epoch is waiting; once every item of it is durable in the sink, the state is
 * persisted, and only then are its messages acknowledged, in order. So each acknowledged message
 * is folded into a persisted state, and each closed interval's line is durable before the state
 * that no longer holds it. A redelivered message that was folded before the persisted state is
 * late there (summary-accumulator.ts): not folded again.
 * Without persistence (replay) the same gate only orders the acknowledgements. No I/O of its own.
 */
import type { SchedulerLike, Subscription } from 'rxjs';

export interface GatedAck {
  /** The item's lines are durable. */
  ack(): void;
  /** The item's write was given up: its message stays unacknowledged (the broker delivers it again). */
  nack(): void;
}

/** What an item releases once persisted: a message (null: a block without one). */
export type Releasable = { ack(): void } | null;

interface Epoch {
  outstanding: number;
  acks: Releasable[];
  json: string | null;
  /** The snapshot failed: the epoch is never persisted, its messages never acknowledged by this gate. */
  failed: unknown;
}

export interface StorageGateCounts {
  checkpoints: number;
  checkpointFailures: number;
}

export class StorageGate {
  readonly counts: StorageGateCounts = { checkpoints: 0, checkpointFailures: 0 };
  private current: Epoch = newEpoch();
  private sealed: Epoch | null = null;
  private writing = false;
  private lastPersistFailed = false;
  /** Stopping: a checkpoint that fails now is not tried again. */
  private stopping = false;
  /** Given up: what is not persisted stays unacknowledged. */
  private givenUp = false;
  private drainWaiters: Array<() => void> = [];
  private lastSealMs = Number.NEGATIVE_INFINITY;
  private sealTimer: Subscription | null = null;

  /**
   * @param snapshot the stage's state as JSON (called when an epoch is sealed)
   * @param persist writes it durably; null: nothing is persisted (replay)
   * @param spacing seals at most once per `ms` of the scheduler's clock (each seal serialises the
   *   state); null: as soon as the previous epoch is persisted
   */
  constructor(
    private readonly snapshot: () => string,
    private readonly persist: ((json: string) => Promise<void>) | null,
    private readonly onError: (err: unknown) => void = () => {},
    private readonly spacing: { ms: number; scheduler: SchedulerLike } | null = null,
  ) {}

  /** An item emitted now, releasing `message` once persisted (null: a block without a message). */
  item(message: Releasable): GatedAck {
    const epoch = this.current;
    epoch.acks.push(message);
    epoch.outstanding++;
    return new GateItem(this, epoch, epoch.acks.length - 1);
  }

  /** @internal GateItem's settlement. */
  settle(epoch: Epoch, index: number, durable: boolean): void {
    if (!durable) epoch.acks[index] = null;
    epoch.outstanding--;
    this.advance();
  }

  /** Between inputs: seals the current epoch when nothing else is waiting to be persisted. */
  poke(): void {
    if (this.sealed === null && this.current.acks.length > 0 && !this.givenUp && this.spacedOut()) {
      this.sealed = this.current;
      this.current = newEpoch();
      try {
        this.sealed.json = this.persist === null ? null : this.snapshot();
      } catch (err) {
        this.sealed.failed = err ?? new Error('snapshot failed');
      }
    }
    this.advance();
  }

  /** True when a seal may happen now; otherwise one is scheduled for when it may. */
  private spacedOut(): boolean {
    if (this.spacing === null) return true;
    const { ms, scheduler } = this.spacing;
    const wait = this.lastSealMs + ms - scheduler.now();
    if (wait <= 0) {
      this.lastSealMs = scheduler.now();
      return true;
    }
    this.sealTimer ??= scheduler.schedule(() => { this.sealTimer = null; this.poke(); }, wait);
    return false;
  }

  /**
   * The processor is stopping: items still being written are waited for (the write stage gives
   * them up itself), but a checkpoint that cannot be persisted is not retried: its messages stay
   * unacknowledged and the broker delivers them again at the next start.
   */
  stop(): void {
    this.stopping = true;
    if (this.lastPersistFailed && !this.writing) this.givenUp = true;
    this.advance();
  }

  /** Resolves once every item so far is persisted and acknowledged (or given up). Call poke() first. */
  drained(): Promise<void> {
    if (this.idle()) return Promise.resolve();
    return new Promise((resolve) => { this.drainWaiters.push(resolve); });
  }

  private idle(): boolean {
    const idle = this.givenUp || (this.sealed === null && this.current.acks.length === 0 && !this.writing);
    if (idle) { this.sealTimer?.unsubscribe(); this.sealTimer = null; }
    return idle;
  }

  private advance(): void {
    const epoch = this.sealed;
    if (!this.givenUp && epoch !== null && epoch.outstanding === 0 && !this.writing) {
      this.writing = true;
      const persisted = epoch.failed !== undefined ? Promise.reject(epoch.failed)
        : this.persist === null || epoch.json === null ? Promise.resolve() : this.persist(epoch.json);
      persisted.then(() => {
        this.writing = false;
        this.lastPersistFailed = false;
        if (this.persist !== null) this.counts.checkpoints++;
        this.sealed = null;
        if (!this.givenUp) for (const message of epoch.acks) message?.ack();
        this.poke();
      }, (err: unknown) => {
        // Kept sealed and tried again at the next input or tick; its messages wait (nothing is lost).
        this.writing = false;
        this.lastPersistFailed = true;
        this.counts.checkpointFailures++;
        this.onError(err);
        if (this.stopping) this.givenUp = true;
        this.notifyIfIdle();
      });
      return;
    }
    this.notifyIfIdle();
  }

  private notifyIfIdle(): void {
    if (!this.idle() || this.drainWaiters.length === 0) return;
    const waiters = this.drainWaiters;
    this.drainWaiters = [];
    for (const w of waiters) w();
  }
}

/** One item's handle (a class: one object per block, no closures). */
class GateItem implements GatedAck {
  private settled = false;
  constructor(private readonly gate: StorageGate, private readonly epoch: Epoch, private readonly index: number) {}
  ack(): void { this.done(true); }
  nack(): void { this.done(false); }
  private done(durable: boolean): void {
    if (this.settled) return;
    this.settled = true;
    this.gate.settle(this.epoch, this.index, durable);
  }
}

function newEpoch(): Epoch {
  return { outstanding: 0, acks: [], json: null, failed: undefined };
}
