import { resolve } from 'node:path';
import { startMetricsServer, type MetricsServer } from '../adapters/http/metrics-server.js';
import { tokenProblem } from '../adapters/http/page-access.js';
import { loadToken } from '../adapters/secret.js';
import { parseListenAddress, type ListenAddress } from '../config/listen-address.js';
import type { RuntimeConfig } from '../config/runtime-schema.js';
import { processorRegistry, type MetricsSource } from './processor-metrics.js';

export type MetricsConfig = NonNullable<RuntimeConfig['metrics']>;

/** Where the endpoint will listen and the token it asks for: settled before the live job connects. */
export interface MetricsAccess extends ListenAddress {
  token: string | null;
}

/**
 * Reads the token (environment variable or file, relative to the runtime file) and refuses an
 * address beyond loopback without one, before anything is connected: a start that cannot open
 * its endpoint stops at once.
 */
export async function metricsAccess(cfg: MetricsConfig, baseDir: string): Promise<MetricsAccess> {
  const address = parseListenAddress(cfg.listen);
  if (address === null) throw new Error(`metrics.listen: expected host:port, received "${cfg.listen}"`); // the schema refused it already
  const token = await loadToken({ env: cfg.token_env, file: cfg.token_file === undefined ? undefined : resolve(baseDir, cfg.token_file) });
  const problem = tokenProblem(address.host, token, 'metrics', 'listen');
  if (problem !== null) throw new Error(problem);
  return { ...address, token };
}

/** Serves the live job's counters as Prometheus text on `GET /metrics`. */
export async function openMetricsEndpoint(access: MetricsAccess, source: MetricsSource, log: (event: string, detail?: Record<string, unknown>) => void): Promise<MetricsServer> {
  const registry = processorRegistry(source);
  return startMetricsServer({ host: access.host, port: access.port, token: access.token, contentType: registry.contentType, render: () => registry.metrics(), log });
}
