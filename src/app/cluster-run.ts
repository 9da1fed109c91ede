import { hostname } from 'node:os';
import { Etcd3 } from 'etcd3';
import type { LoadedCluster } from '../cluster/load-cluster.js';
import { UnitLeases } from '../cluster/unit-leases.js';
import { startLive, type LiveDeps, type LiveProcessor } from './live.js';
import { settlesWithin } from './time-bound.js';

export interface ClusterProcessor {
  processorId: string;
  /** Units this processor holds now, with their live status. */
  status(): Record<string, unknown>;
  /** Hands every unit back (drained, acknowledged) and leaves the cluster. */
  stop(): Promise<void>;
}

/** How long a unit whose lease was lost may take to clean up before the processor joins again. */
const LOST_STOP_MS = 5_000;

/** etcd key prefix of a cluster. */
export const clusterPrefix = (name: string): string => `strainward/${name}/`;

/**
 * The processor as a cluster member: it holds the work units its leases give it, each one a live
 * job of its own (src/app/live.ts, unchanged) on the unit's client id and files.
 */
export async function startClusterProcessor(cluster: LoadedCluster, deps: LiveDeps & { processorId?: string }): Promise<ClusterProcessor> {
  const processorId = deps.processorId ?? `${hostname()}-${process.pid}`;
  const byKey = new Map(cluster.units.map((u) => [u.key, u]));
  const running = new Map<string, LiveProcessor>();
  const ttl_ms = cluster.config.cluster.etcd.lease_ttl_s * 1000;
  const etcd = new Etcd3({
    hosts: cluster.config.cluster.etcd.endpoints, dialTimeout: 3000,
    // Without a deadline a call waits for a connection for ever when no member answers: a
    // reconcile pass would never end and an orderly stop would wait on it. One TTL (at least 1 s)
    // is as long as an answer can be of use; the lease keep-alive is a stream and has none.
    defaultCallOptions: (context) => (context.isStream ? {} : { deadline: Date.now() + Math.max(1000, ttl_ms) }),
  });
  const leases = new UnitLeases(etcd, {
    prefix: clusterPrefix(cluster.config.cluster.name), processorId, ttl_s: cluster.config.cluster.etcd.lease_ttl_s,
    maxUnits: cluster.config.cluster.max_units_per_processor, units: cluster.units.map((u) => u.key),
    reconcileEvery_ms: cluster.config.cluster.reconcile_every_ms, now: deps.now,
  }, {
    start: async (key) => {
      const live = await startLive(byKey.get(key)!.loaded, deps);
      running.set(key, live);
      deps.log('unit_started', { unit: key, processor: processorId });
    },
    drop: (key) => {
      const live = running.get(key);
      live?.connection.abandon();
      live?.outbound.abandon();
    },
    stop: async (key, how) => {
      const live = running.get(key);
      // Kept in `running` until stopped: a lease lost during an orderly stop must still find the
      // connections to drop (else they reconnect with the unit's client id under the next holder).
      const forget = () => { if (running.get(key) === live) running.delete(key); };
      if (how === 'release') await live?.stop().finally(forget);
      else if (live !== undefined) {
        // Its connections are gone: what it had not acknowledged comes back to the next holder. The
        // rest is cleanup, given a bounded time so that this processor can join again.
        const stopped = await settlesWithin(live.stop(), LOST_STOP_MS);
        forget();
        if (!stopped) (deps.warn ?? deps.log)('unit_stop_timed_out', { unit: key, processor: processorId, after_ms: LOST_STOP_MS });
      }
      deps.log('unit_stopped', { unit: key, processor: processorId, how });
    },
    log: (event, detail) => (event === 'unit_lost' || event.endsWith('_failed') ? (deps.warn ?? deps.log) : deps.log)(event, detail),
  });
  await leases.start();
  return {
    processorId,
    status: () => Object.fromEntries([...leases.holdings()].map(([key, since]) => [key, { since_ms: since, ...(running.get(key)?.status() ?? {}) }])),
    async stop() {
      await leases.stop();
      etcd.close();
    },
  };
}
