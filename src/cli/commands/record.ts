import { resolve } from 'node:path';
import { Command } from 'commander';
import pino from 'pino';
import { z } from 'zod';
import { CaptureWriter } from '../../adapters/capture/capture-writer.js';
import { connectMqtt } from '../../adapters/mqtt/connection.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { compileTopicPattern, subscriptionFilter } from '../../ingest/topic.js';
import { parseOptions } from '../options.js';
import { brokerAccess } from '../../app/broker-access.js';

export const RecordOptionsSchema = z.strictObject({
  config: z.string().min(1),
  dir: z.string().min(1).optional(),
  flushMs: z.coerce.number().int().positive().default(1000),
});

/**
 * `strainward record`: the raw capture without processing. Its own client id (`<client_id>-recorder`)
 * and session, so it never takes messages from the processor. A message is acknowledged once the
 * capture file holding it is flushed and synced.
 */
export function recordCommand(): Command {
  return new Command('record')
    .description('record every message of the structure\'s topics to a raw capture, without processing')
    .requiredOption('-c, --config <file>', 'runtime configuration (broker, topic layout, capture settings)')
    .option('--dir <dir>', 'capture directory (default: the runtime configuration\'s capture.dir)')
    .option('--flush-ms <ms>', 'the longest a message waits for its batch to be written and synced (then it is acknowledged)', '1000')
    .action(async (raw: unknown) => {
      const o = parseOptions(RecordOptionsSchema, raw);
      const log = pino({ name: 'strainward-record' }, pino.destination(2));
      const { runtime: rc, structure, baseDir } = await loadRuntimeFile(o.config);
      const dir = resolve(baseDir, o.dir ?? rc.capture?.dir ?? 'var/capture');
      const capture = await CaptureWriter.open({
        dir, rotateBytes: rc.capture?.rotate_bytes ?? 64 * 1024 ** 2, rotateEvery_ms: (rc.capture?.rotate_every_s ?? 3600) * 1000, now: Date.now,
        retention: { maxAge_h: rc.capture?.retention_hours, maxBytes: rc.capture?.retention_bytes }, syncDelay_ms: o.flushMs,
        onWritable: (failure) => (failure === null ? log.info({ event: 'capture_writable' }) : log.error({ event: 'capture_failed', message: failure })),
      });
      const pattern = compileTopicPattern(rc.mqtt.topic_pattern);
      const connection = await connectMqtt({
        ...brokerAccess(rc, baseDir), clientId: `${rc.mqtt.client_id}-recorder`, protocolVersion: rc.mqtt.protocol_version,
        fallbackToV311: rc.mqtt.fallback_to_v311,
        subscriptions: [subscriptionFilter(pattern, structure.structureId)],
      }, { now: Date.now, log: (event, detail) => log.info({ event, ...detail }) });
      let recorded = 0;
      // Acknowledged once synced; a failed write is tried again (the acknowledgement waits).
      const sub = connection.messages$.subscribe((m) => {
        capture.append(m.raw);
        capture.durable().then(() => m.ack(), () => {});
        recorded++;
      });
      log.info({ event: 'recording', dir, structure: structure.structureId });
      // Until a signal, or a login the broker refuses on a reconnect (exit 7, as for `run`).
      const refused = await new Promise<Error | null>((done) => {
        process.once('SIGINT', () => done(null));
        process.once('SIGTERM', () => done(null));
        void connection.loginRefused.then(done);
      });
      sub.unsubscribe();
      await capture.close();
      await new Promise((r) => setImmediate(r)); // the last acknowledgements go out before the DISCONNECT
      await connection.close();
      log.info({ event: 'stopped', recorded });
      if (refused) throw refused;
    });
}
