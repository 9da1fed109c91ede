/**
 * test:faults - the fault proof. Real Mosquitto (persistence on, the README's limits) and
 * VictoriaMetrics on loopback, `strainward run` as its own process, a publisher sending scans with
 * unique sequence numbers at a steady rate; one fault after another:
 *   processor SIGKILL and restart; processor stopped while 10x max_held_acks queue; broker restart;
 *   database stopped and started; database stalled (SIGSTOP 15 s); spool disk full and freed
 *   (tmpfs); a burst of refused messages 3x max_held_acks.
 * Each scenario prints one JSON line {scenario, published, received, stored, duplicated, lost},
 * counted from the database (distinct seqs in sw_raw, complete sw_result rows); the last line is
 * the totals in the same form. Exits 1 when anything is lost. Needs root (mounts a tmpfs).
 * Environment: SW_FAULTS_ONLY=name,name runs only those scenarios.
 */
import { execFileSync } from 'node:child_process';
import { statfsSync } from 'node:fs';
import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { loadStructureFile } from '../../src/config/load.js';
import { freePort, startVictoriaMetrics, type VictoriaMetricsServer } from '../../test/support/servers.js';
import { mountTmpfs } from '../../test/support/tmpfs.js';
import { startPersistentBroker } from './broker.js';
import { countScenario, type ScenarioFigures } from './count.js';
import { ProcessorProcess } from './processor.js';
import { ScanPublisher, STRAIN_LOGGER } from './publisher.js';

const MAX_HELD_ACKS = 100;
const RATE_PER_S = 50;
const SPOOL_TMPFS = '8m';
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

const root = await mkdtemp(join(tmpdir(), 'sw-faults-'));
const spoolDisk = await mountTmpfs('sw-faults-spool-', SPOOL_TMPFS);
const spoolMount = spoolDisk.path;
const cleanups: Array<() => Promise<unknown>> = [() => spoolDisk.remove()];
async function cleanUp(): Promise<void> {
  while (cleanups.length > 0) await cleanups.pop()!().catch((e: unknown) => console.error('cleanup:', e));
  await rm(root, { recursive: true, force: true });
}
for (const signal of ['SIGINT', 'SIGTERM'] as const) process.once(signal, () => { void cleanUp().finally(() => process.exit(130)); });

const structure = await loadStructureFile('config/brannock-mere.yaml');
const groups = (structure.groupsByLogger.get(STRAIN_LOGGER) ?? []).map((g) => g.config.id);
const brokerDir = join(root, 'broker');
await mkdir(brokerDir);
const broker = await startPersistentBroker(brokerDir, await freePort(), MAX_HELD_ACKS);
cleanups.push(() => broker.stop());
const vmDir = join(root, 'vm');
await mkdir(vmDir);
let vm: VictoriaMetricsServer = await startVictoriaMetrics({ dataDir: vmDir });
const vmPort = vm.port;
cleanups.push(() => vm.stop());

const runtime = join(root, 'run.yaml');
const deadLetterFile = join(root, 'dl.ndjson');
await writeFile(runtime, [
  'schema_version: 1',
  `structure: ${resolve('config/brannock-mere.yaml')}`,
  `mqtt: { url: "${broker.url}", client_id: faults-processor, max_held_acks: ${MAX_HELD_ACKS}, keepalive_s: 5, reconnect_max_ms: 2000 }`,
  'presence: { every_s: 2 }',
  `database: { url: "${vm.url}", org: faults, bucket: faults, timeout_ms: 3000, max_retries: 2, min_retry_delay_ms: 100, max_retry_delay_ms: 1000,`,
  `  spool: { dir: ${join(spoolMount, 'spool')}, limit_bytes: 268435456, policy: block } }`,
  `dead_letters: { file: ${deadLetterFile} }`,
  `capture: { dir: ${join(root, 'capture')} }`,
  `alarms: { state_file: ${join(root, 'alarm-state.json')}, log_file: ${join(root, 'alarms.ndjson')} }`,
].join('\n'));
const processor = new ProcessorProcess(runtime, join(root, 'processor.log'));
await processor.start();
cleanups.push(() => processor.close());
const publisher = await ScanPublisher.connect(broker.url, structure);
cleanups.push(() => publisher.close());
publisher.startThermal();

/** What a scenario observed of its own fault: proof that the fault really happened. */
type Evidence = Record<string, number>;

/**
 * Publishes from the start of the fault until `tailSeconds` after it is over, then waits until
 * everything is stored (at most 90 s) and counts.
 */
async function scenario(name: string, tailSeconds: number, fault: (evidence: Evidence) => Promise<void>): Promise<ScenarioFigures> {
  const from = publisher.nextSeq;
  const evidence: Evidence = {};
  publisher.startScans(RATE_PER_S);
  await fault(evidence);
  await sleep(tailSeconds * 1000);
  publisher.stopScans();
  const to = publisher.nextSeq - 1;
  const unconfirmed = await publisher.drained();
  if (unconfirmed > 0) evidence.publisher_unconfirmed = unconfirmed;
  let figures = await countScenario(vm, name, publisher.published, from, to, structure.structureId, STRAIN_LOGGER, groups);
  const deadline = Date.now() + 90_000;
  while (figures.lost > 0 && Date.now() < deadline) {
    await sleep(2000);
    figures = await countScenario(vm, name, publisher.published, from, to, structure.structureId, STRAIN_LOGGER, groups);
  }
  console.log(JSON.stringify({ ...figures, evidence }));
  return figures;
}

const timed = async (f: () => Promise<void>): Promise<number> => { const t0 = Date.now(); await f(); return Date.now() - t0; };
const lines = async (file: string) => (await readFile(file, 'utf8').catch(() => '')).split('\n').filter((l) => l !== '').length;

const all: Array<[string, number, (e: Evidence) => Promise<void>]> = [
  ['baseline', 5, async () => {}],
  ['processor_sigkill_restart', 5, async (e) => {
    await sleep(4000);
    await processor.kill();
    e.down_ms = await timed(async () => { await sleep(2000); await processor.start(); });
  }],
  ['processor_stopped_backlog_10x', 5, async (e) => {
    await sleep(1000);
    await processor.stop();
    const first = publisher.nextSeq;
    // Queue more than 10x max_held_acks in the persistent session while it is down.
    while (publisher.nextSeq - first < 10 * MAX_HELD_ACKS + RATE_PER_S) await sleep(100);
    e.queued_while_down = publisher.nextSeq - first;
    e.max_held_acks = MAX_HELD_ACKS;
    await processor.start();
  }],
  ['broker_restart', 5, async (e) => { await sleep(3000); e.down_ms = await timed(() => broker.restart(2000)); }],
  ['database_stopped_started', 5, async (e) => {
    await sleep(2000);
    e.down_ms = await timed(async () => {
      await vm.stop();
      await sleep(8000);
      vm = await startVictoriaMetrics({ dataDir: vmDir, port: vmPort });
    });
  }],
  ['database_stalled_sigstop_15s', 5, async (e) => {
    await sleep(2000);
    e.stalled_ms = await timed(async () => {
      process.kill(vm.pid, 'SIGSTOP');
      await sleep(15_000);
      process.kill(vm.pid, 'SIGCONT');
    });
  }],
  ['spool_disk_full_and_freed', 5, async (e) => {
    await sleep(1000);
    await vm.stop();
    // Fill the spool's disk but for a little room: the spool fills it within seconds.
    const filler = join(spoolMount, 'filler');
    execFileSync('sh', ['-c', `dd if=/dev/zero of=${filler} bs=64k 2>/dev/null || true; truncate -s -192k ${filler}`]);
    let minFree = Number.POSITIVE_INFINITY;
    for (let i = 0; i < 90; i++) {
      const st = statfsSync(spoolMount);
      minFree = Math.min(minFree, st.bavail * st.bsize);
      await sleep(100);
    }
    e.spool_disk_free_min_bytes = minFree;
    await rm(filler, { force: true });
    vm = await startVictoriaMetrics({ dataDir: vmDir, port: vmPort });
  }],
  ['refused_burst_3x', 5, async (e) => {
    await sleep(1000);
    const before = await lines(deadLetterFile);
    await publisher.burstRefused(3 * MAX_HELD_ACKS);
    e.refused_published = 3 * MAX_HELD_ACKS;
    const deadline = Date.now() + 30_000;
    while ((await lines(deadLetterFile)) - before < 3 * MAX_HELD_ACKS && Date.now() < deadline) await sleep(200);
    e.dead_letters_written = (await lines(deadLetterFile)) - before;
  }],
];
const only = process.env.SW_FAULTS_ONLY?.split(',');
const results: ScenarioFigures[] = [];
let failure: unknown = null;
try {
  for (const [name, tail, fault] of all) {
    if (only !== undefined && !only.includes(name)) continue;
    results.push(await scenario(name, tail, fault));
  }
} catch (err) {
  failure = err;
  console.error('test:faults:', err);
} finally {
  await cleanUp();
}
const sum = (k: keyof Omit<ScenarioFigures, 'scenario'>) => results.reduce((n, r) => n + r[k], 0);
const totals = { scenario: 'total', published: sum('published'), received: sum('received'), stored: sum('stored'), duplicated: sum('duplicated'), lost: sum('lost') };
console.log(JSON.stringify(totals));
process.exit(failure !== null || totals.lost > 0 ? 1 : 0);
