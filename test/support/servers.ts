/**
 * Real servers for integration tests: Mosquitto (MQTT broker) and VictoriaMetrics (time-series
 * database), both from Debian packages (`mosquitto`, `victoria-metrics`). Every server listens on a
 * free loopback port only and is stopped by the test that started it.
 *
 * How VictoriaMetrics stores points written through the InfluxDB v2 write API
 * (`POST /api/v2/write?org=..&bucket=..&precision=ms`), found by writing points and exporting them
 * (victoria-metrics 1.79.5, Debian):
 * - the metric name (`__name__`) is `<measurement>_<field key>`, one series per field
 *   (`sw_result,structure=brannock-mere von_mises_MPa=12.5` -> `sw_result_von_mises_MPa`);
 * - every tag becomes a label of the same name, escapes removed (`t\ k=v\=1` -> label `t k` = `v=1`);
 * - `org` and `bucket` are accepted and ignored: no label, no separate storage (all buckets share one
 *   namespace, so a structure id tag is what separates structures);
 * - values keep about 12 significant decimal digits (1/3 -> 0.333333333333, pi -> 3.141592653589)
 *   and magnitudes near 1e-300 read back as 0; timestamps keep milliseconds;
 * - an unparsable line is logged by the server and skipped while the request still returns 204;
 * - the default retention is one month, so points older than that vanish silently: tests start the
 *   server with `-retentionPeriod=100y` so replayed historical data is kept.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { createServer, connect } from 'node:net';
import { tmpdir, userInfo } from 'node:os';
import { join } from 'node:path';

const LOOPBACK = '127.0.0.1';
const MOSQUITTO_BIN = '/usr/sbin/mosquitto';
const VICTORIA_BIN = '/usr/bin/victoria-metrics';

/** A free TCP port: bind port 0 on 127.0.0.1, read the port the kernel chose, release it. */
export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, LOOPBACK, () => {
      const address = server.address();
      const port = typeof address === 'object' && address !== null ? address.port : 0;
      server.close(() => resolve(port));
    });
  });
}

export function sleep(ms: number): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, ms));
}

export function acceptsConnections(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = connect({ host: LOOPBACK, port });
    socket.once('connect', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('error', () => resolve(false));
  });
}

/** Polls `ready` every 50 ms until it is true; throws with the server's output after `timeoutMs`. */
export async function waitUntil(ready: () => Promise<boolean>, child: ChildProcess, output: () => string, what: string, timeoutMs = 15_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`${what} exited with code ${child.exitCode}:\n${output()}`);
    if (await ready()) return;
    await sleep(50);
  }
  child.kill('SIGKILL');
  throw new Error(`${what} not ready after ${timeoutMs} ms:\n${output()}`);
}

export function spawnLogged(bin: string, args: string[]): { child: ChildProcess; output: () => string } {
  const child = spawn(bin, args, { stdio: ['ignore', 'pipe', 'pipe'] });
  let log = '';
  const keep = (chunk: Buffer): void => {
    log = (log + chunk.toString('utf8')).slice(-8_000); // the tail is enough to explain a failure
  };
  child.stdout?.on('data', keep);
  child.stderr?.on('data', keep);
  return { child, output: () => log };
}

/** Sends SIGTERM and waits for exit (SIGKILL after 10 s). */
export function stopChild(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => {
    const killer = setTimeout(() => child.kill('SIGKILL'), 10_000);
    child.once('exit', () => {
      clearTimeout(killer);
      resolve();
    });
    child.kill('SIGTERM');
  });
}

export interface MosquittoServer {
  /** `mqtt://127.0.0.1:<port>` (`mqtts://` with a TLS listener) */
  url: string;
  port: number;
  /** Process id (benchmarks read its CPU time). */
  pid: number;
  stop(): Promise<void>;
}

/**
 * Starts Mosquitto on a free loopback port with its own mosquitto.conf in a temp dir (no persistence).
 * Anonymous clients are allowed unless a password file is given or `allowAnonymous` is false.
 */
export async function startMosquitto(opts: {
  aclFile?: string; passwordFile?: string; allowAnonymous?: boolean;
  /** A TLS listener (url `mqtts://`) with these PEM files, e.g. test/fixtures/tls. */
  tls?: { caFile: string; certFile: string; keyFile: string };
  /** Broker limits (mosquitto.conf options of the same name); unset: 2000 in flight, no packet limit. */
  maxInflightMessages?: number; maxPacketSize?: number;
} = {}): Promise<MosquittoServer> {
  const dir = await mkdtemp(join(tmpdir(), 'sw-mosquitto-'));
  const port = await freePort();
  const allowAnonymous = opts.allowAnonymous ?? opts.passwordFile === undefined;
  const conf = [
    `listener ${port} ${LOOPBACK}`,
    ...(opts.tls ? [`cafile ${opts.tls.caFile}`, `certfile ${opts.tls.certFile}`, `keyfile ${opts.tls.keyFile}`] : []),
    `allow_anonymous ${allowAnonymous ? 'true' : 'false'}`,
    'persistence false',
    'log_dest stdout',
    // The processor holds acknowledgements while frames wait for temperature and while writes batch:
    // the broker must allow that many QoS 1 messages in flight (default 20) and keep a long queue.
    `max_inflight_messages ${opts.maxInflightMessages ?? 2000}`,
    'max_queued_messages 200000',
    ...(opts.maxPacketSize === undefined ? [] : [`max_packet_size ${opts.maxPacketSize}`]),
    // Started as root, mosquitto would switch to the `mosquitto` user, which cannot read the test's
    // private temp files; stay the current user (ignored when not root).
    `user ${userInfo().username}`,
    ...(opts.passwordFile ? [`password_file ${opts.passwordFile}`] : []),
    ...(opts.aclFile ? [`acl_file ${opts.aclFile}`] : []),
  ].join('\n');
  const confPath = join(dir, 'mosquitto.conf');
  await writeFile(confPath, conf + '\n');
  const { child, output } = spawnLogged(MOSQUITTO_BIN, ['-c', confPath]);
  await waitUntil(() => acceptsConnections(port), child, output, 'mosquitto').catch(async (err: unknown) => {
    await rm(dir, { recursive: true, force: true }); // a failed start leaves nothing behind
    throw err;
  });
  return {
    url: `${opts.tls ? 'mqtts' : 'mqtt'}://${LOOPBACK}:${port}`,
    port,
    pid: child.pid!,
    async stop() {
      await stopChild(child);
      await rm(dir, { recursive: true, force: true });
    },
  };
}

/**
 * Starts Mosquitto with a configuration file written by the caller (which must listen on
 * 127.0.0.1:`port`); stop() stops the process and leaves the caller's files alone.
 */
export async function startMosquittoWithConfig(confPath: string, port: number): Promise<MosquittoServer> {
  const { child, output } = spawnLogged(MOSQUITTO_BIN, ['-c', confPath]);
  await waitUntil(() => acceptsConnections(port), child, output, 'mosquitto');
  return { url: `mqtt://${LOOPBACK}:${port}`, port, pid: child.pid!, stop: () => stopChild(child) };
}

/** One exported series: labels (with `__name__`) and its samples in time order. */
export interface ExportedSeries {
  metric: Record<string, string>;
  values: number[];
  timestamps: number[];
}

export interface VictoriaMetricsServer {
  /** `http://127.0.0.1:<port>` */
  url: string;
  port: number;
  /** Process id (benchmarks read its CPU time). */
  pid: number;
  dataDir: string;
  stop(): Promise<void>;
  /** Makes recently written samples searchable (POST-free `GET /internal/force_flush`). */
  forceFlush(): Promise<void>;
  /** All samples of the series matching a series selector, e.g. `{__name__=~"sw_result_.+"}`. */
  exportSeries(match: string): Promise<ExportedSeries[]>;
}

/**
 * Starts VictoriaMetrics on a free (or the given) loopback port. Pass the `dataDir` and `port` of a
 * stopped server to restart it on the same data. A data dir this function created is removed on stop.
 */
export async function startVictoriaMetrics(opts: { dataDir?: string; port?: number; extraArgs?: string[] } = {}): Promise<VictoriaMetricsServer> {
  const ownDir = opts.dataDir === undefined;
  const dataDir = opts.dataDir ?? (await mkdtemp(join(tmpdir(), 'sw-victoria-')));
  const port = opts.port ?? (await freePort());
  const url = `http://${LOOPBACK}:${port}`;
  const { child, output } = spawnLogged(VICTORIA_BIN, [
    `-httpListenAddr=${LOOPBACK}:${port}`,
    `-storageDataPath=${dataDir}`,
    '-search.latencyOffset=0s',
    '-retentionPeriod=100y',
    ...(opts.extraArgs ?? []),
  ]);
  const healthy = async (): Promise<boolean> => {
    try {
      const res = await fetch(`${url}/health`);
      return res.ok;
    } catch {
      return false;
    }
  };
  await waitUntil(healthy, child, output, 'victoria-metrics').catch(async (err: unknown) => {
    if (ownDir) await rm(dataDir, { recursive: true, force: true });
    throw err;
  });
  return {
    url,
    port,
    pid: child.pid!,
    dataDir,
    async stop() {
      await stopChild(child);
      if (ownDir) await rm(dataDir, { recursive: true, force: true });
    },
    async forceFlush() {
      const res = await fetch(`${url}/internal/force_flush`);
      if (!res.ok) throw new Error(`force_flush: HTTP ${res.status}`);
    },
    async exportSeries(match: string) {
      // Just-flushed rows become searchable within moments, not at once: read until two reads
      // 100 ms apart agree (at most 3 s), so a test never judges a half-visible series.
      const read = async (): Promise<ExportedSeries[]> => {
        const query = new URLSearchParams({ 'match[]': match, start: '0' });
        const res = await fetch(`${url}/api/v1/export?${query}`);
        if (!res.ok) throw new Error(`export: HTTP ${res.status} ${await res.text()}`);
        return (await res.text()).split('\n').filter((line) => line.trim() !== '').map((line) => JSON.parse(line) as ExportedSeries);
      };
      const size = (series: ExportedSeries[]) => series.reduce((n, x) => n + x.values.length, 0);
      let last = await read();
      for (let i = 0; i < 30; i++) {
        await sleep(100);
        await fetch(`${url}/internal/force_flush`);
        const next = await read();
        if (size(next) === size(last) && next.length === last.length) return next;
        last = next;
      }
      return last;
    },
  };
}
