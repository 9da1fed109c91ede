import type { Etcd3, Lease } from 'etcd3';

/** What the lease owner does with a unit it wins or gives up. */
export interface UnitHooks {
  /** Connect the unit's MQTT session and start processing. */
  start(unitKey: string): Promise<void>;
  /**
   * `release`: an orderly hand-over (drain, acknowledge, disconnect). `lost`: the lease is gone or
   * about to be: the connection must already be dropped (`drop`), the rest is cleanup.
   */
  stop(unitKey: string, how: 'release' | 'lost'): Promise<void>;
  /** Drop the unit's broker connections at once, without waiting for anything (synchronous). */
  drop(unitKey: string): void;
  log(event: string, detail?: Record<string, unknown>): void;
}

export interface UnitLeaseOptions {
  /** etcd key prefix, ending in `/`. */
  prefix: string;
  processorId: string;
  ttl_s: number;
  maxUnits: number;
  units: readonly string[];
  reconcileEvery_ms: number;
  now: () => number;
}

/** What is stored under `<prefix>holders/<unit>` (with the holder's lease: gone when the lease is). */
export interface HolderRecord { processor: string; since_ms: number }

/**
 * Ownership of work units by etcd lease, with no coordinator of our own: each processor keeps one
 * lease, registers itself under `members/` and takes free units (a create-if-absent transaction on
 * `holders/<unit>`) up to its fair share, min(max units, ceil(units / members)); above its share it
 * hands units back in an orderly way. A killed processor's keys vanish with its lease after the TTL.
 *
 * Safety: the lease is given up locally, and every unit's connection dropped, once no keep-alive
 * has succeeded for 3/4 of the TTL, before etcd can expire it and let another processor connect
 * with the same client id.
 */
export class UnitLeases {
  private lease: Lease | null = null;
  private lastRenew_ms = 0;
  private readonly held = new Map<string, number>();
  private timer: NodeJS.Timeout | null = null;
  private guard: NodeJS.Timeout | null = null;
  private busy = false;
  private stopping = false;

  constructor(private readonly etcd: Etcd3, private readonly o: UnitLeaseOptions, private readonly hooks: UnitHooks) {}

  /** Units held now, with the time each was taken (epoch ms). */
  holdings(): Map<string, number> { return new Map(this.held); }

  async start(): Promise<void> {
    await this.openLease();
    this.guard = setInterval(() => this.checkLease(), Math.max(50, Math.floor(this.o.ttl_s * 1000 / 10)));
    this.timer = setInterval(() => { void this.reconcile(); }, this.o.reconcileEvery_ms);
    await this.reconcile();
  }

  /** Orderly stop: every unit drained and handed back, then the lease revoked (others take over at once). */
  async stop(): Promise<void> {
    this.stopping = true;
    if (this.timer) clearInterval(this.timer);
    if (this.guard) clearInterval(this.guard);
    // A pass in progress ends within its etcd calls' deadlines; bounded here all the same.
    const waitUntil_ms = this.o.now() + 2 * this.o.ttl_s * 1000;
    while (this.busy && this.o.now() < waitUntil_ms) await new Promise((r) => setTimeout(r, 20));
    for (const unit of [...this.held.keys()]) await this.release(unit);
    await this.lease?.revoke().catch(() => {});
    this.lease = null;
  }

  private key(kind: 'members' | 'holders', name: string): string { return `${this.o.prefix}${kind}/${name}`; }

  private async openLease(): Promise<void> {
    const lease = this.etcd.lease(this.o.ttl_s);
    lease.on('keepaliveSucceeded', () => { this.lastRenew_ms = this.o.now(); });
    lease.on('lost', (err) => { if (this.lease === lease) this.loseAll(`lease lost: ${err.message}`); });
    await lease.grant();
    this.lastRenew_ms = this.o.now();
    this.lease = lease;
    await lease.put(this.key('members', this.o.processorId)).value(JSON.stringify({ since_ms: this.o.now() }));
    this.hooks.log('cluster_joined', { processor: this.o.processorId, leaseId: await lease.grant() });
  }

  private checkLease(): void {
    if (this.lease !== null && this.o.now() - this.lastRenew_ms > this.o.ttl_s * 750) {
      this.loseAll(`no lease keep-alive for ${this.o.now() - this.lastRenew_ms} ms (TTL ${this.o.ttl_s} s)`);
    }
  }

  /** Drops every unit at once (connections first), then cleans up and starts over with a new lease. */
  private loseAll(reason: string): void {
    const lease = this.lease;
    this.lease = null;
    const units = [...this.held.keys()];
    for (const u of units) this.hooks.drop(u);
    for (const u of units) this.hooks.log('unit_lost', { unit: u, processor: this.o.processorId, reason });
    this.held.clear();
    void (async () => {
      for (const u of units) await this.hooks.stop(u, 'lost').catch((e: unknown) => this.hooks.log('unit_stop_failed', { unit: u, message: String(e) }));
      lease?.release();
      if (!this.stopping) await this.openLease().catch((e: unknown) => this.hooks.log('cluster_lease_failed', { message: String(e) }));
    })();
  }

  private async members(): Promise<number> {
    const keys = await this.etcd.getAll().prefix(this.key('members', '')).keys();
    return Math.max(1, keys.length);
  }

  /** One pass: give back units above the fair share, or take free ones up to it. */
  async reconcile(): Promise<void> {
    if (this.busy || this.stopping || this.lease === null) return;
    this.busy = true;
    try {
      const share = Math.min(this.o.maxUnits, Math.ceil(this.o.units.length / (await this.members())));
      // Units whose holder key is no longer ours (revoked, or taken after our lease expired).
      for (const unit of [...this.held.keys()]) {
        const v = await this.etcd.get(this.key('holders', unit)).string();
        if (v === null || (JSON.parse(v) as HolderRecord).processor !== this.o.processorId) {
          this.hooks.drop(unit);
          this.held.delete(unit);
          this.hooks.log('unit_lost', { unit, processor: this.o.processorId, reason: 'holder key gone' });
          await this.hooks.stop(unit, 'lost');
        }
      }
      if (this.held.size > share) {
        const newest = [...this.held.entries()].sort((a, b) => b[1] - a[1]).slice(0, this.held.size - share);
        for (const [unit] of newest) await this.release(unit);
        return;
      }
      for (const unit of this.rotated()) {
        if (this.held.size >= share || this.lease === null || this.stopping) break;
        if (this.held.has(unit)) continue;
        if (await this.tryTake(unit)) await this.run(unit);
      }
    } catch (err) {
      this.hooks.log('cluster_reconcile_failed', { message: err instanceof Error ? err.message : String(err) });
    } finally {
      this.busy = false;
    }
  }

  /** The units in an order of this processor's own, so that processors starting together mostly try different ones first. */
  private rotated(): string[] {
    let h = 0;
    for (const ch of this.o.processorId) h = (h * 31 + ch.charCodeAt(0)) >>> 0;
    const n = this.o.units.length;
    return this.o.units.map((_, i) => this.o.units[(i + h) % n]);
  }

  private async tryTake(unit: string): Promise<boolean> {
    const lease = this.lease;
    if (lease === null) return false;
    const key = this.key('holders', unit);
    const record: HolderRecord = { processor: this.o.processorId, since_ms: this.o.now() };
    const r = await this.etcd.if(key, 'Create', '==', 0).then(this.etcd.put(key).value(JSON.stringify(record)).lease(await lease.grant())).commit();
    return r.succeeded;
  }

  private async run(unit: string): Promise<void> {
    this.held.set(unit, this.o.now());
    this.hooks.log('unit_acquired', { unit, processor: this.o.processorId });
    try {
      await this.hooks.start(unit);
    } catch (err) {
      // Could not start (broker down...): give it back for anyone to try again.
      this.hooks.log('unit_start_failed', { unit, message: err instanceof Error ? err.message : String(err) });
      this.hooks.drop(unit);
      await this.hooks.stop(unit, 'lost').catch(() => {});
      this.held.delete(unit);
      await this.deleteIfOurs(unit);
    }
  }

  private async release(unit: string): Promise<void> {
    if (!this.held.has(unit)) return;
    await this.hooks.stop(unit, 'release').catch((e: unknown) => this.hooks.log('unit_stop_failed', { unit, message: String(e) }));
    this.held.delete(unit);
    await this.deleteIfOurs(unit);
    this.hooks.log('unit_released', { unit, processor: this.o.processorId });
  }

  private async deleteIfOurs(unit: string): Promise<void> {
    const key = this.key('holders', unit);
    const v = await this.etcd.get(key).string().catch(() => null);
    if (v === null || (JSON.parse(v) as HolderRecord).processor !== this.o.processorId) return;
    // Deleted only if still this very record: never another holder's key.
    await this.etcd.if(key, 'Value', '==', v).then(this.etcd.delete().key(key)).commit().catch(() => {});
  }
}

/** Every unit's holder now (null: no holder), read from etcd: for `status`. */
export async function readHolders(etcd: Etcd3, prefix: string, units: readonly string[]): Promise<Map<string, HolderRecord | null>> {
  const all = await etcd.getAll().prefix(`${prefix}holders/`).strings();
  return new Map(units.map((u) => {
    const v = all[`${prefix}holders/${u}`];
    return [u, v === undefined ? null : (JSON.parse(v) as HolderRecord)];
  }));
}
