import { Command } from 'commander';
import { z } from 'zod';
import { LOG_LEVELS, makeLogger } from '../../adapters/log/make-logger.js';
import { startLive } from '../../app/live.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { CAUTION } from '../help-text.js';
import { parseOptions } from '../options.js';

export const RunOptionsSchema = z.strictObject({
  config: z.string().min(1),
  statusEvery: z.coerce.number().int().min(0).default(60),
  logFormat: z.enum(['auto', 'json', 'lines']).default('auto'),
  logLevel: z.enum(LOG_LEVELS).default('info'),
});

/** `strainward run`: the live job, until SIGINT or SIGTERM. */
export function runCommand(): Command {
  return new Command('run')
    .description('process live readings from the broker into the database (or line-protocol files)')
    .requiredOption('-c, --config <file>', 'runtime configuration (YAML or JSON) naming the structure file')
    .option('--status-every <s>', 'log a status line every N seconds (0: never)', '60')
    .option('--log-format <format>', 'auto (readable lines on a terminal, JSON otherwise), json or lines', 'auto')
    .option('--log-level <level>', 'info (everything) or warn (only what to act on: alarms, losses and returns, refusals)', 'info')
    .addHelpText('after', '\nExample:\n  strainward run -c config/brannock-mere.run.yaml --status-every 30')
    .action(async (raw: unknown) => {
      const o = parseOptions(RunOptionsSchema, raw);
      const log = makeLogger({ level: o.logLevel, ...(o.logFormat === 'auto' ? {} : { readable: o.logFormat === 'lines' }) });
      const loaded = await loadRuntimeFile(o.config);
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
      await live.stop();
      log.info({ event: 'stopped', ...live.status() });
      if (refused) throw refused;
    });
}
