/**
 * A real etcd cluster on loopback for tests (Debian `etcd-server`): n members, each on two free
 * ports (client, peer), data in a temporary folder removed at stop. Members can be killed
 * (SIGKILL) one by one; the cluster keeps working while a majority lives.
 */
import type { ChildProcess } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Etcd3 } from 'etcd3';
import { freePort, spawnLogged, stopChild, waitUntil } from './servers.js';

const ETCD_BIN = '/usr/bin/etcd';

export interface EtcdMember { name: string; clientUrl: string; child: ChildProcess; output: () => string }

export interface EtcdCluster {
  endpoints: string[];
  members: EtcdMember[];
  /** The member that leads now (asked of a live member). */
  leader(): Promise<EtcdMember>;
  kill(member: EtcdMember): void;
  stop(): Promise<void>;
}

export async function startEtcdCluster(n = 3): Promise<EtcdCluster> {
  const dir = await mkdtemp(join(tmpdir(), 'sw-etcd-'));
  const ports = await Promise.all(Array.from({ length: n }, async () => ({ client: await freePort(), peer: await freePort() })));
  const initial = ports.map((p, i) => `m${i}=http://127.0.0.1:${p.peer}`).join(',');
  const members: EtcdMember[] = ports.map((p, i) => {
    const clientUrl = `http://127.0.0.1:${p.client}`;
    const { child, output } = spawnLogged(ETCD_BIN, [
      '--name', `m${i}`, '--data-dir', join(dir, `m${i}`),
      '--listen-client-urls', clientUrl, '--advertise-client-urls', clientUrl,
      '--listen-peer-urls', `http://127.0.0.1:${p.peer}`, '--initial-advertise-peer-urls', `http://127.0.0.1:${p.peer}`,
      '--initial-cluster', initial, '--initial-cluster-state', 'new', '--initial-cluster-token', `sw-${ports[0].client}`,
      '--heartbeat-interval', '100', '--election-timeout', '1000', '--log-level', 'warn',
    ]);
    return { name: `m${i}`, clientUrl, child, output };
  });
  const endpoints = members.map((m) => m.clientUrl);
  for (const m of members) {
    await waitUntil(async () => {
      const c = new Etcd3({ hosts: m.clientUrl, dialTimeout: 500 });
      // A member without a quorum yet holds a request rather than failing it: give up after 1 s.
      const put = c.put('ready').value('1').then(() => true, () => false);
      try { return await Promise.race([put, new Promise<boolean>((r) => setTimeout(() => r(false), 1000))]); } finally { c.close(); }
    }, m.child, m.output, `etcd ${m.name}`, 30_000);
  }
  return {
    endpoints,
    members,
    async leader() {
      for (const m of members) {
        if (m.child.exitCode !== null || m.child.signalCode !== null) continue;
        const c = new Etcd3({ hosts: m.clientUrl, dialTimeout: 1000 });
        try {
          const s = await c.maintenance.status();
          const list = await c.cluster.memberList({});
          const lead = list.members.find((x) => x.ID === s.leader);
          const found = members.find((x) => x.name === lead?.name);
          if (found) return found;
        } catch { /* ask the next one */ } finally { c.close(); }
      }
      throw new Error('no etcd member knows a leader');
    },
    kill(member) { member.child.kill('SIGKILL'); },
    async stop() {
      await Promise.all(members.map((m) => stopChild(m.child)));
      await rm(dir, { recursive: true, force: true });
    },
  };
}
