/**
 * A whole cluster on loopback for the takeover test and `bench:scale`: etcd members, one broker,
 * VictoriaMetrics, several copies of the invented deck (each its own structure id, each one work
 * unit), N processors `strainward run --cluster` and the simulator publishing every copy, each a
 * process of its own. Every server is a real one from Debian; nothing listens beyond 127.0.0.1.
 */
import { mkdir, mkdtemp, readFile, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { Etcd3 } from 'etcd3';
import { loadStructureFile } from '../../src/config/load.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import { readHolders, type HolderRecord } from '../../src/cluster/unit-leases.js';
import { clusterPrefix } from '../../src/app/cluster-run.js';
import { startEtcdCluster, type EtcdCluster } from '../../test/support/etcd.js';
import { freePort, startVictoriaMetrics, type VictoriaMetricsServer } from '../../test/support/servers.js';
import { startNatsCluster, startVmagent, type NatsCluster } from '../../test/support/cluster-servers.js';
import { startPersistentBroker, type PersistentBroker } from '../faults/broker.js';
import { ProcessorProcess } from '../faults/processor.js';
import { countScenario } from '../faults/count.js';
import { SimulatorProcess, type PublishedScans, type SimulatorOptions } from './simulator-process.js';

export const CLUSTER_NAME = 'loopback';
const MAX_HELD_ACKS = 256;
/**
 * Samples of one series at one timestamp kept once: a scan redelivered after a takeover or a broker
 * failover rewrites the very points it wrote before, and the database stores them once.
 */
const VM_ARGS = ['-dedup.minScrapeInterval=1ms'];

export interface Harness {
  root: string;
  clusterFile: string;
  etcd: EtcdCluster;
  /** One Mosquitto, or a NATS cluster (`nats`). */
  broker: PersistentBroker | null;
  nats: NatsCluster | null;
  /** The database nodes: one written directly, or several behind vmagent (replicated). */
  vms: VictoriaMetricsServer[];
  killVm(i: number): void;
  restartVm(i: number): Promise<void>;
  structures: CompiledStructure[];
  /** The copies' structure files, in `structures`' order. */
  structureFiles: string[];
  /** Every node of the broker. */
  brokerUrls: string[];
  units: string[];
  processors: ProcessorProcess[];
  logFiles: string[];
  /** The simulator publishing every structure (stopped and killed by `close` if still running). */
  startSimulator(o?: Omit<SimulatorOptions, 'structureFiles' | 'brokers' | 'dir'>): SimulatorProcess;
  holders(): Promise<Map<string, HolderRecord | null>>;
  /** Waits until every unit has a holder (at most `timeoutMs`); returns the holders. */
  allHeld(timeoutMs?: number): Promise<Map<string, HolderRecord | null>>;
  /** What one database node holds of every scan of one structure the broker confirmed, over all its loggers. */
  count(structureIndex: number, published: PublishedScans, vmIndex?: number): Promise<StructureFigures>;
  close(): Promise<void>;
}

export interface StructureFigures { structure: string; published: number; received: number; stored: number; duplicated: number; lost: number }

export interface HarnessOptions {
  processors: number;
  structures: number;
  etcdMembers: number;
  leaseTtl_s?: number;
  broker?: 'mosquitto' | 'nats';
  /** VictoriaMetrics nodes: 1 is written directly; more are written through vmagent, each getting every point. */
  databases?: number;
}

export async function startHarness(o: HarnessOptions): Promise<Harness> {
  const root = await mkdtemp(join(tmpdir(), 'sw-cluster-'));
  const cleanups: Array<() => Promise<void>> = [];
  try {
    const etcd = await startEtcdCluster(o.etcdMembers);
    cleanups.push(() => etcd.stop());
    let broker: PersistentBroker | null = null;
    let nats: NatsCluster | null = null;
    if (o.broker === 'nats') {
      // ack_wait: above the longest time these processors hold a message unacknowledged (well under
      // 20 s here: no spool backlog, no long temperature wait), and short enough that a killed
      // holder's unacknowledged messages come back within the test.
      nats = await startNatsCluster(3, { ackWait_s: 20, maxAckPending: 8 * MAX_HELD_ACKS });
      cleanups.push(() => nats!.stop());
    } else {
      await mkdir(join(root, 'broker'));
      broker = await startPersistentBroker(join(root, 'broker'), await freePort(), MAX_HELD_ACKS);
      cleanups.push(() => broker!.stop());
    }
    const brokerUrl = nats?.mqttUrls[0] ?? broker!.url;
    const servers = nats === null ? '' : `servers: [${nats.mqttUrls.map((u) => `"${u}"`).join(', ')}], connect_timeout_ms: 10000, `;
    const vms: VictoriaMetricsServer[] = [];
    for (let i = 0; i < (o.databases ?? 1); i++) {
      await mkdir(join(root, `vm${i}`));
      const vm = await startVictoriaMetrics({ dataDir: join(root, `vm${i}`), extraArgs: VM_ARGS });
      vms.push(vm);
      cleanups.push(() => vms[i].stop());
    }
    let dbUrl = vms[0].url;
    if (vms.length > 1) {
      const agent = await startVmagent(vms.map((v) => v.url));
      cleanups.push(() => agent.stop());
      dbUrl = agent.url;
    }
    const deck = await readFile(resolve('config/brannock-mere.yaml'), 'utf8');
    const structures: CompiledStructure[] = [];
    const structureFiles: string[] = [];
    const entries: string[] = [];
    for (let i = 0; i < o.structures; i++) {
      const id = `deck-${String.fromCharCode(97 + i)}`;
      const file = join(root, `${id}.yaml`);
      // The invented deck under another id: the same instruments, another structure.
      await writeFile(file, deck.replace(/^  id: brannock-mere$/m, `  id: ${id}`));
      structures.push(await loadStructureFile(file));
      structureFiles.push(file);
      const run = join(root, `${id}.run.yaml`);
      await writeFile(run, [
        'schema_version: 1',
        `structure: ${file}`,
        `mqtt: { url: "${brokerUrl}", ${servers}client_id: sw-${id}, max_held_acks: ${MAX_HELD_ACKS}, keepalive_s: 5, reconnect_max_ms: 2000, protocol_version: 4 }`,
        'presence: { every_s: 2 }',
        `database: { url: "${dbUrl}", org: cluster, bucket: cluster, timeout_ms: 3000, max_retries: 2, min_retry_delay_ms: 100, max_retry_delay_ms: 1000,`,
        '  spool: { dir: spool, limit_bytes: 268435456, policy: block } }',
        'dead_letters: { file: deadletters.ndjson }',
        'alarms: { state_file: alarm-state.json, log_file: alarms.ndjson }',
      ].join('\n') + '\n');
      entries.push(`  - runtime: ${run}`);
    }
    const clusterFile = join(root, 'cluster.yaml');
    await writeFile(clusterFile, [
      'schema_version: 1',
      'cluster:',
      `  name: ${CLUSTER_NAME}`,
      `  etcd: { endpoints: [${etcd.endpoints.map((e) => `"${e}"`).join(', ')}], lease_ttl_s: ${o.leaseTtl_s ?? 2} }`,
      `  shared_dir: ${join(root, 'shared')}`,
      '  reconcile_every_ms: 200',
      'units:',
      ...entries,
    ].join('\n') + '\n');
    const logFiles: string[] = [];
    const processors: ProcessorProcess[] = [];
    for (let i = 0; i < o.processors; i++) {
      const logFile = join(root, `p${i + 1}.log`);
      logFiles.push(logFile);
      const p = new ProcessorProcess(clusterFile, logFile, process.env, ['run', '--cluster', clusterFile, '--processor-id', `p${i + 1}`, '--log-format', 'json', '--status-every', '0']);
      await p.start();
      processors.push(p);
      // An orderly stop first, bounded: a test that failed half way leaves them running.
      cleanups.push(async () => { await Promise.race([p.stop(), new Promise((r) => setTimeout(r, 10_000))]); await p.kill(); await p.close(); });
    }
    const brokerUrls = nats?.mqttUrls ?? [brokerUrl];
    const units = structures.map((s) => `${s.structureId}/${s.structureId}`);
    const client = new Etcd3({ hosts: etcd.endpoints, dialTimeout: 2000 });
    cleanups.push(async () => client.close());
    const holders = () => readHolders(client, clusterPrefix(CLUSTER_NAME), units);
    return {
      root, clusterFile, etcd, broker, nats, vms, structures, structureFiles, brokerUrls,
      startSimulator(so = {}) {
        const sim = SimulatorProcess.start({ ...so, structureFiles, brokers: brokerUrls, dir: root });
        cleanups.push(() => sim.close());
        return sim;
      },
      killVm(i) { process.kill(vms[i].pid, 'SIGKILL'); },
      async restartVm(i) { vms[i] = await startVictoriaMetrics({ dataDir: vms[i].dataDir, port: vms[i].port, extraArgs: VM_ARGS }); }, units, processors, logFiles, holders,
      async allHeld(timeoutMs = 30_000) {
        const deadline = Date.now() + timeoutMs;
        for (;;) {
          const h = await holders().catch(() => null);
          if (h !== null && [...h.values()].every((v) => v !== null)) return h;
          if (Date.now() > deadline) throw new Error(`not every unit held after ${timeoutMs} ms: ${JSON.stringify(h === null ? null : Object.fromEntries(h))}`);
          await new Promise((r) => setTimeout(r, 50));
        }
      },
      async count(i, published, vmIndex = 0) {
        const s = structures[i];
        const f: StructureFigures = { structure: s.structureId, published: 0, received: 0, stored: 0, duplicated: 0, lost: 0 };
        // Every logger's scans: in sw_raw once each, and in sw_result once per group the logger carries.
        for (const [logger, bySeq] of published.get(s.structureId) ?? []) {
          const groups = (s.groupsByLogger.get(logger) ?? []).map((g) => g.config.id);
          const c = await countScenario(vms[vmIndex], s.structureId, bySeq, 0, Number.MAX_SAFE_INTEGER, s.structureId, logger, groups);
          f.published += c.published; f.received += c.received; f.stored += c.stored; f.duplicated += c.duplicated; f.lost += c.lost;
        }
        return f;
      },
      async close() {
        while (cleanups.length > 0) await cleanups.pop()!().catch(() => undefined);
        await rm(root, { recursive: true, force: true });
      },
    };
  } catch (err) {
    while (cleanups.length > 0) await cleanups.pop()!().catch(() => undefined);
    await rm(root, { recursive: true, force: true });
    throw err;
  }
}

/** One processor's hold of one unit, from its own log: [acquired, released or lost or killed]. */
export interface HoldSpan { unit: string; processor: string; from_ms: number; to_ms: number }

/**
 * Every hold, from the processors' logs (pino `time`, the machine's one clock). A hold starts at
 * `unit_acquired` (before the unit connects) and ends at `unit_stopped` (after it disconnected),
 * `unit_lost` (its connections dropped at once) or at the process's kill time when it logged neither.
 */
export async function holdSpans(logFiles: readonly string[], killedAt: ReadonlyMap<string, number>): Promise<HoldSpan[]> {
  const spans: HoldSpan[] = [];
  for (const file of logFiles) {
    const open = new Map<string, HoldSpan>();
    const text = await readFile(file, 'utf8').catch(() => '');
    for (const line of text.split('\n')) {
      if (!line.startsWith('{')) continue;
      const e = JSON.parse(line) as { event?: string; unit?: string; processor?: string; time: number };
      if (e.unit === undefined || e.processor === undefined) continue;
      if (e.event === 'unit_acquired') open.set(e.unit, { unit: e.unit, processor: e.processor, from_ms: e.time, to_ms: Number.POSITIVE_INFINITY });
      // `unit_lost` is logged right after the unit's connections were dropped: the hold ends there.
      if (e.event === 'unit_stopped' || e.event === 'unit_lost' || e.event === 'unit_start_failed') {
        const s = open.get(e.unit);
        if (s) { s.to_ms = e.time; spans.push(s); open.delete(e.unit); }
      }
    }
    for (const s of open.values()) spans.push({ ...s, to_ms: killedAt.get(s.processor) ?? Number.POSITIVE_INFINITY });
  }
  return spans;
}

/** Pairs of holds of one unit by two processors that overlap in time. */
export function doubleHolds(spans: readonly HoldSpan[]): Array<[HoldSpan, HoldSpan]> {
  const out: Array<[HoldSpan, HoldSpan]> = [];
  for (let i = 0; i < spans.length; i++) {
    for (let j = i + 1; j < spans.length; j++) {
      const a = spans[i];
      const b = spans[j];
      if (a.unit === b.unit && a.processor !== b.processor && a.from_ms < b.to_ms && b.from_ms < a.to_ms) out.push([a, b]);
    }
  }
  return out;
}

/**
 * Alarms raised twice, over every unit's alarm log on the shared volume (all holders of a unit
 * append to its one log, in the order they decided): one occurrence (alarm id and its raise count:
 * an alarm cleared but not yet acknowledged keeps its id when its condition comes back, with the
 * count one up) raised again, or an alarm raised for evidence at or before what its rule and
 * subject had already been judged on (logger time: a redelivered scan raising again what was
 * raised, or cleared, before). One line each.
 */
export async function alarmsRaisedTwice(root: string): Promise<string[]> {
  const out: string[] = [];
  const walk = async (dir: string): Promise<void> => {
    for (const e of await readdir(dir, { withFileTypes: true }).catch(() => [])) {
      const p = join(dir, e.name);
      if (e.isDirectory()) await walk(p);
      else if (e.name === 'alarms.ndjson') out.push(...raisedTwiceIn(await readFile(p, 'utf8')).map((l) => `${p}: ${l}`));
    }
  };
  await walk(join(root, 'shared'));
  return out;
}

/** Count of `raised` transitions in the alarm logs under the shared volume (the check above is empty-handed without them). */
export async function alarmsRaised(root: string): Promise<number> {
  let n = 0;
  const walk = async (dir: string): Promise<void> => {
    for (const e of await readdir(dir, { withFileTypes: true }).catch(() => [])) {
      const p = join(dir, e.name);
      if (e.isDirectory()) await walk(p);
      else if (e.name === 'alarms.ndjson') n += transitionsOf(await readFile(p, 'utf8')).filter((m) => m.transition === 'raised').length;
    }
  };
  await walk(join(root, 'shared'));
  return n;
}

interface LoggedTransition { transition: string; at: string; alarm_id: string; raise_count: number; rule: string; subject: unknown }

/** The transition lines of one alarm log (`type: transition`, src/alarms/routing/alarm-log.ts), in order. */
function transitionsOf(text: string): LoggedTransition[] {
  return text.split('\n').filter((l) => l !== '').map((l) => JSON.parse(l) as { type: string; message?: LoggedTransition })
    .filter((r) => r.type === 'transition' && r.message !== undefined).map((r) => r.message!);
}

/** Pure: the double raises in one unit's alarm log (see `alarmsRaisedTwice`). */
export function raisedTwiceIn(text: string): string[] {
  const out: string[] = [];
  const raised = new Set<string>();
  const judgedUpTo = new Map<string, number>();
  for (const m of transitionsOf(text)) {
    // Acknowledgements carry the command's time, not the evidence's.
    if (m.transition !== 'raised' && m.transition !== 'cleared' && m.transition !== 'level_changed') continue;
    const cause = `${m.rule} ${JSON.stringify(m.subject)}`;
    const at = Date.parse(m.at);
    if (m.transition === 'raised') {
      const occurrence = `${m.alarm_id} #${m.raise_count}`;
      if (raised.has(occurrence)) out.push(`${occurrence} raised again at ${m.at}`);
      else if (at <= (judgedUpTo.get(cause) ?? Number.NEGATIVE_INFINITY)) out.push(`${m.alarm_id} (${cause}) raised at ${m.at}, not after evidence already judged at ${new Date(judgedUpTo.get(cause)!).toISOString()}`);
      raised.add(occurrence);
    }
    judgedUpTo.set(cause, Math.max(at, judgedUpTo.get(cause) ?? Number.NEGATIVE_INFINITY));
  }
  return out;
}
