import { Etcd3 } from 'etcd3';
import { clusterPrefix } from '../app/cluster-run.js';
import { loadClusterFile } from '../cluster/load-cluster.js';
import { readHolders } from '../cluster/unit-leases.js';
import { SilentProcessorError } from './errors.js';
import { withTimeout } from '../app/time-bound.js';

export interface UnitStanding { unit: string; holder: string | null; since: string | null; age_s: number | null }

/**
 * `strainward status --cluster <file>`: every work unit, the processor holding it and for how long,
 * read from etcd. A unit with no holder is computed by nobody: exit 4, for the operations crew's
 * watchdog, like a silent processor.
 */
export async function checkClusterStatus(file: string, o: { json: boolean; waitMs: number }, out: (line: string) => void, now = Date.now): Promise<UnitStanding[]> {
  const cluster = await loadClusterFile(file);
  const etcd = new Etcd3({ hosts: cluster.config.cluster.etcd.endpoints, dialTimeout: o.waitMs });
  let holders;
  try {
    holders = await withTimeout(readHolders(etcd, clusterPrefix(cluster.config.cluster.name), cluster.units.map((u) => u.key)),
      o.waitMs * 5, `etcd at ${cluster.config.cluster.etcd.endpoints.join(', ')} did not answer within ${o.waitMs} ms`);
  } finally {
    etcd.close();
  }
  const units: UnitStanding[] = [...holders].map(([unit, h]) => ({
    unit, holder: h?.processor ?? null, since: h ? new Date(h.since_ms).toISOString() : null, age_s: h ? (now() - h.since_ms) / 1000 : null,
  }));
  if (o.json) out(JSON.stringify({ cluster: cluster.config.cluster.name, units }));
  else for (const u of units) out(u.holder === null ? `${u.unit}  NO HOLDER: nothing computes it` : `${u.unit}  held by ${u.holder} for ${u.age_s!.toFixed(1)} s (since ${u.since})`);
  const free = units.filter((u) => u.holder === null);
  if (free.length > 0) throw new SilentProcessorError(`${free.length} of ${units.length} units have no holder: ${free.map((u) => u.unit).join(', ')}`);
  return units;
}
