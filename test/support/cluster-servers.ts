/**
 * Clustered servers on loopback for the scale-out test and bench: a NATS cluster with its MQTT
 * gateway and JetStream (Debian `nats-server`), and vmagent (Debian `victoria-metrics`) in front of
 * several VictoriaMetrics nodes. Free ports, temporary folders, stopped by their starter.
 */
import type { ChildProcess } from 'node:child_process';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { acceptsConnections, freePort, spawnLogged, stopChild, waitUntil } from './servers.js';

const NATS_BIN = '/usr/sbin/nats-server';
const VMAGENT_BIN = '/usr/bin/vmagent';

export interface NatsNode { name: string; mqttUrl: string; child: ChildProcess; output: () => string; conf: string }

export interface NatsCluster {
  /** Every node's MQTT address, for `mqtt.servers`. */
  mqttUrls: string[];
  nodes: NatsNode[];
  kill(node: NatsNode): void;
  /** Starts a killed node again on its configuration (same ports, same JetStream folder). */
  restart(node: NatsNode): Promise<void>;
  stop(): Promise<void>;
}

/**
 * The settings the scale-out README asks for (config/cluster/nats-node-*.conf): JetStream on every
 * node, the MQTT gateway with three stream and consumer replicas, `ack_wait` above the processor's
 * longest acknowledgement hold, `max_ack_pending` above its `max_held_acks`.
 */
export function natsNodeConfig(o: { name: string; client: number; cluster: number; mqtt: number; routes: number[]; storeDir: string; ackWait_s: number; maxAckPending: number }): string {
  return [
    `server_name: ${o.name}`,
    `listen: 127.0.0.1:${o.client}`,
    `jetstream { store_dir: "${o.storeDir}" }`,
    'cluster {',
    '  name: strainward',
    `  listen: 127.0.0.1:${o.cluster}`,
    `  routes: [ ${o.routes.map((p) => `"nats://127.0.0.1:${p}"`).join(', ')} ]`,
    '}',
    'mqtt {',
    `  listen: 127.0.0.1:${o.mqtt}`,
    '  stream_replicas: 3',
    '  consumer_replicas: 3',
    `  ack_wait: "${o.ackWait_s}s"`,
    `  max_ack_pending: ${o.maxAckPending}`,
    '}',
  ].join('\n') + '\n';
}

export async function startNatsCluster(n = 3, o: { ackWait_s?: number; maxAckPending?: number } = {}): Promise<NatsCluster> {
  const dir = await mkdtemp(join(tmpdir(), 'sw-nats-'));
  const ports = await Promise.all(Array.from({ length: n }, async () => ({ client: await freePort(), cluster: await freePort(), mqtt: await freePort() })));
  const nodes: NatsNode[] = [];
  const spawnNode = (node: Omit<NatsNode, 'child' | 'output'>): NatsNode => {
    const { child, output } = spawnLogged(NATS_BIN, ['-c', node.conf]);
    return { ...node, child, output };
  };
  for (const [i, p] of ports.entries()) {
    const conf = join(dir, `n${i + 1}.conf`);
    await writeFile(conf, natsNodeConfig({
      name: `n${i + 1}`, client: p.client, cluster: p.cluster, mqtt: p.mqtt, routes: ports.map((q) => q.cluster),
      storeDir: join(dir, `js${i + 1}`), ackWait_s: o.ackWait_s ?? 60, maxAckPending: o.maxAckPending ?? 8192,
    }));
    nodes.push(spawnNode({ name: `n${i + 1}`, mqttUrl: `mqtt://127.0.0.1:${p.mqtt}`, conf }));
  }
  const ready = async (node: NatsNode) => {
    const port = Number(new URL(node.mqttUrl).port);
    // The MQTT gateway listens once JetStream has a leader for its streams.
    await waitUntil(() => acceptsConnections(port), node.child, node.output, `nats ${node.name}`, 30_000);
  };
  for (const node of nodes) await ready(node);
  return {
    mqttUrls: nodes.map((x) => x.mqttUrl),
    nodes,
    kill(node) { node.child.kill('SIGKILL'); },
    async restart(node) {
      const fresh = spawnNode({ name: node.name, mqttUrl: node.mqttUrl, conf: node.conf });
      node.child = fresh.child;
      node.output = fresh.output;
      await ready(node);
    },
    async stop() {
      await Promise.all(nodes.map((x) => stopChild(x.child)));
      await rm(dir, { recursive: true, force: true });
    },
  };
}

export interface Vmagent { url: string; stop(): Promise<void> }

/**
 * vmagent taking the influx client's `/api/v2/write` and forwarding every point to each
 * `remoteWrite` url (replication: each VictoriaMetrics node gets everything), buffering on disk
 * while a node is down.
 */
export async function startVmagent(remoteWrite: readonly string[]): Promise<Vmagent> {
  const dir = await mkdtemp(join(tmpdir(), 'sw-vmagent-'));
  const port = await freePort();
  const { child, output } = spawnLogged(VMAGENT_BIN, [
    `-httpListenAddr=127.0.0.1:${port}`,
    `-remoteWrite.tmpDataPath=${dir}`,
    '-remoteWrite.flushInterval=100ms',
    ...remoteWrite.map((u) => `-remoteWrite.url=${u}/api/v1/write`),
  ]);
  const url = `http://127.0.0.1:${port}`;
  await waitUntil(async () => { try { return (await fetch(`${url}/health`)).ok; } catch { return false; } }, child, output, 'vmagent', 30_000);
  return {
    url,
    async stop() {
      await stopChild(child);
      await rm(dir, { recursive: true, force: true });
    },
  };
}
