import { Command } from 'commander';
import { z } from 'zod';
import { LOG_LEVELS, makeLogger } from '../../adapters/log/make-logger.js';
import { startLive } from '../../app/live.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { CAUTION } from '../help-text.js';
import { loadClusterFile } from '../../cluster/load-cluster.js';
import { startClusterProcessor } from '../../app/cluster-run.js';
import { parseOptions } from '../options.js';
import { EXIT } from '../exit-codes.js';
import { settlesWithin } from '../../app/time-bound.js';

export const RunOptionsSchema = z.strictObject({
  config: z.string().min(1).optional(),
  /** A cluster file (src/cluster): the work units this processor may hold, shared by etcd lease. */
  cluster: z.string().min(1).optional(),
  processorId: z.string().regex(/^[A-Za-z0-9_.-]+$/, 'letters, digits, _ . - only').optional(),
  statusEvery: z.coerce.number().int().min(0).default(60),
  logFormat: z.enum(['auto', 'json', 'lines']).default('auto'),
  logLevel: z.enum(LOG_LEVELS).default('info'),
}).refine((o) => (o.config === undefined) !== (o.cluster === undefined), { message: 'give either --config or --cluster', path: ['config'] });

/**
 * How long an orderly stop may take. It drains, writes and acknowledges what is in flight, and says
 * `stopped` on the broker; with the broker or etcd gone some of that can never finish. What is not
 * acknowledged comes back on the next session and the capture is synced before every
 * acknowledgement, so ending the process then loses nothing a kill would not (the fault proof).
 */
export const STOP_DEADLINE_MS = 15_000;

/** Runs the orderly stop; past STOP_DEADLINE_MS says so and ends the process (exit 1). */
async function stopWithin(stop: () => Promise<void>, log: ReturnType<typeof makeLogger>): Promise<void> {
  if (await settlesWithin(stop(), STOP_DEADLINE_MS)) return;
  log.warn({ event: 'stop_timed_out', after_ms: STOP_DEADLINE_MS, message: 'the orderly stop did not finish (broker, database or etcd not answering); ending now: unacknowledged messages come back to the next session' });
  log.flush();
  process.exit(EXIT.runtime);
}

/** `strainward run`: the live job, until SIGINT or SIGTERM. */
export function runCommand(): Command {
  return new Command('run')
    .description('process live readings from the broker into the database (or line-protocol files)')
    .option('-c, --config <file>', 'runtime configuration (YAML or JSON) naming the structure file')
    .option('--cluster <file>', 'cluster file: hold work units by etcd lease, shared with other processors (instead of -c)')
    .option('--processor-id <id>', 'this processor\'s name in the cluster (default: host name and process id)')
    .option('--status-every <s>', 'log a status line every N seconds (0: never)', '60')
    .option('--log-format <format>', 'auto (readable lines on a terminal, JSON otherwise), json or lines', 'auto')
    .option('--log-level <level>', 'info (everything) or warn (only what to act on: alarms, losses and returns, refusals)', 'info')
    .addHelpText('after', '\nExample:\n  strainward run -c config/brannock-mere.run.yaml --status-every 30\n  strainward run --cluster config/cluster/cluster.yaml --processor-id node-a')
    .action(async (raw: unknown) => {
      const o = parseOptions(RunOptionsSchema, raw);
      const log = makeLogger({ level: o.logLevel, ...(o.logFormat === 'auto' ? {} : { readable: o.logFormat === 'lines' }) });
      if (o.cluster !== undefined) return runCluster(o.cluster, o.processorId, o.statusEvery, log);
      const loaded = await loadRuntimeFile(o.config!);
      const live = await startLive(loaded, {
        now: Date.now, log: (event, detail) => log.info({ event, ...detail }), warn: (event, detail) => log.warn({ event, ...detail }),
      });
      log.info({
        event: 'started', structure: loaded.structure.structureId, protocolVersion: live.connection.protocolVersion, livePage: live.pageUrl,
        alarmsDisabled: loaded.structure.alarmsDisabled, metrics: live.metricsUrl, notice: CAUTION,
      });
      const timer = o.statusEvery > 0 ? setInterval(() => log.info({ event: 'status', ...live.status() }), o.statusEvery * 1000) : null;
      // Until a signal, or a login the broker refuses on a reconnect (a configuration error: retrying cannot cure it).
      const refused = await new Promise<Error | null>((done) => {
        process.once('SIGINT', () => done(null));
        process.once('SIGTERM', () => done(null));
        void live.connection.loginRefused.then(done);
        void live.outbound.loginRefused.then(done);
      });
      if (timer) clearInterval(timer);
      await stopWithin(() => live.stop(), log);
      log.info({ event: 'stopped', ...live.status() });
      if (refused) throw refused;
    });
}

async function runCluster(file: string, processorId: string | undefined, statusEvery: number, log: ReturnType<typeof makeLogger>): Promise<void> {
  const cluster = await loadClusterFile(file);
  const member = await startClusterProcessor(cluster, {
    now: Date.now, processorId, log: (event, detail) => log.info({ event, ...detail }), warn: (event, detail) => log.warn({ event, ...detail }),
  });
  log.info({ event: 'cluster_started', processor: member.processorId, units: cluster.units.map((u) => u.key) });
  const timer = statusEvery > 0 ? setInterval(() => log.info({ event: 'status', units: member.status() }), statusEvery * 1000) : null;
  await new Promise<void>((done) => { process.once('SIGINT', done); process.once('SIGTERM', done); });
  if (timer) clearInterval(timer);
  await stopWithin(() => member.stop(), log);
  log.info({ event: 'stopped', processor: member.processorId });
}
