/**
 * Starts: one VictoriaMetrics server (loopback, free port) for the whole file.
 * The PointSink contract on the database sink, writing through the InfluxDB v2 write API.
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll } from 'vitest';
import { openInfluxSink } from '../../src/adapters/influx/influx-sink.js';
import { readBackFromVictoria } from '../adapters/influx/vm-read-back.js';
import { describeSinkContract } from '../adapters/sink-contract.js';
import { startVictoriaMetrics, type VictoriaMetricsServer } from '../support/servers.js';

let vm: VictoriaMetricsServer;
beforeAll(async () => {
  vm = await startVictoriaMetrics();
});
afterAll(async () => {
  await vm?.stop();
});

describeSinkContract('InfluxSink -> VictoriaMetrics', async () => {
  const spoolDir = await mkdtemp(join(tmpdir(), 'sw-contract-spool-'));
  const sink = await openInfluxSink({
    url: vm.url,
    org: 'brannock',
    bucket: 'strain',
    token: null,
    timeout_ms: 5_000,
    gzipThreshold_bytes: 1_000,
    batchSize: 200,
    flushInterval_ms: 20,
    maxRetries: 2,
    minRetryDelay_ms: 50,
    maxRetryDelay_ms: 500,
    spool: { dir: spoolDir, limitBytes: 10_000_000 },
  });
  return {
    sink,
    readBack: (m) => readBackFromVictoria(vm, m),
    async cleanup() {
      await sink.close();
      await rm(spoolDir, { recursive: true, force: true });
    },
  };
});
