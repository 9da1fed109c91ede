import { execFile } from 'node:child_process';
import { readFile } from 'node:fs/promises';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';
import { parse as parseYaml } from 'yaml';
import { loadClusterFile } from '../../src/cluster/load-cluster.js';
import { natsNodeConfig } from '../support/cluster-servers.js';

const run = promisify(execFile);

/** The scale-out configurations shipped in config/cluster: each is what the tests run, and each is accepted by its server. */
describe('shipped scale-out configurations', () => {
  it('the cluster file loads: one unit for the invented deck, its files moved under the shared folder, NATS as broker', async () => {
    const c = await loadClusterFile('config/cluster/cluster.yaml');
    expect(c.units.map((u) => u.key)).toEqual(['brannock-mere/brannock-mere']);
    const rc = c.units[0].loaded.runtime;
    expect(rc.mqtt.servers).toHaveLength(3);
    expect(rc.mqtt.protocol_version).toBe(4);
    expect(rc.mqtt.max_held_acks).toBeLessThan(8192); // below the NATS max_ack_pending
    expect(rc.alarms.state_file).toMatch(/var\/cluster\/brannock-mere\/brannock-mere\/alarm-state\.json$/);
    expect(rc.database!.spool.dir).toMatch(/var\/cluster\/brannock-mere\/brannock-mere\/spool$/);
    expect(rc.fatigue.state_file).toMatch(/var\/cluster\/brannock-mere\/brannock-mere\/var\/fatigue-state\.json$/);
    expect(rc.rezero.audit_file).toMatch(/var\/cluster\/brannock-mere\/brannock-mere\/var\/rezero-audit\.ndjson$/);
    expect(rc.metrics).toBeUndefined();
  });

  for (const i of [1, 2, 3]) {
    it(`nats-node-${i}.conf is the tested node configuration, and nats-server accepts it`, async () => {
      const text = await readFile(`config/cluster/nats-node-${i}.conf`, 'utf8');
      const body = text.split('\n').filter((l) => !l.startsWith('#')).join('\n');
      expect(body).toBe(natsNodeConfig({ name: `n${i}`, client: 4221 + i, cluster: 6221 + i, mqtt: 1882 + i, routes: [6222, 6223, 6224], storeDir: `/var/lib/strainward-nats/n${i}`, ackWait_s: 60, maxAckPending: 8192 }));
      const r = await run('/usr/sbin/nats-server', ['-t', '-c', `config/cluster/nats-node-${i}.conf`]);
      expect(r.stderr + r.stdout).toContain('is valid');
    });
  }

  it('the vmauth and shard files say what the README says', async () => {
    const auth = parseYaml(await readFile('config/cluster/vmauth.yaml', 'utf8')) as { unauthorized_user: { url_prefix: string[] } };
    expect(auth.unauthorized_user.url_prefix).toHaveLength(2);
    const shard = parseYaml(await readFile('config/cluster/vmagent-shard.yaml', 'utf8')) as Array<{ action: string; source_labels: string[] }>;
    expect(shard[0]).toMatchObject({ action: 'keep', source_labels: ['structure'] });
  });
});
