/**
 * Starts: VictoriaMetrics servers (loopback), stopped and restarted on the same port and data dir
 * to simulate outages; a loopback recording proxy in front of one of them (arrival order); one plain node:http server on loopback that answers 401 and echoes the
 * request's Authorization header (a hostile database, to prove the token never leaks), and one
 * that answers 400 to everything (a database refusing the content).
 * Checks that the database sink spools during an outage and that every point arrives exactly once, in order.
 */
import { createServer, type Server } from 'node:http';
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { InfluxSink, openInfluxSink, type InfluxSinkOptions } from '../../src/adapters/influx/influx-sink.js';
import { SpoolFullError, type SpoolOptions } from '../../src/adapters/spool/spool.js';
import { startRecordingProxy } from '../support/recording-proxy.js';
import { readBackFromVictoria, sampleCount } from '../adapters/influx/vm-read-back.js';
import { expectSamePoints, samplePoints, uniqueMeasurement } from '../adapters/sink-contract.js';
import { freePort, startVictoriaMetrics, type VictoriaMetricsServer } from '../support/servers.js';

const cleanups: Array<() => Promise<void>> = [];
afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup();
});

async function tempDir(prefix: string): Promise<string> {
  const dir = await mkdtemp(join(tmpdir(), prefix));
  cleanups.push(() => rm(dir, { recursive: true, force: true }));
  return dir;
}

async function vmOn(port: number, dataDir: string): Promise<VictoriaMetricsServer> {
  const vm = await startVictoriaMetrics({ port, dataDir });
  cleanups.push(() => vm.stop());
  return vm;
}

async function sinkTo(url: string, spool: SpoolOptions, extra: Partial<Omit<InfluxSinkOptions, 'spool'>> = {}): Promise<InfluxSink> {
  const sink = await openInfluxSink({
    url, org: 'brannock', bucket: 'strain', token: null, timeout_ms: 2_000, gzipThreshold_bytes: 1_000,
    batchSize: 50, flushInterval_ms: 10, maxRetries: 1, minRetryDelay_ms: 20, maxRetryDelay_ms: 200,
    spool, ...extra,
  });
  cleanups.push(() => sink.close());
  return sink;
}

const FIELDS_PER_POINT = 3; // samplePoints writes three fields: three samples per point

describe('InfluxSink outage handling', () => {
  it('spools while the URL points to a closed port, then delivers everything once, in order, when a server opens there', async () => {
    const port = await freePort();
    const spoolDir = await tempDir('sw-outage-spool-');
    const sink = await sinkTo(`http://127.0.0.1:${port}`, { dir: spoolDir, limitBytes: 5_000_000 });
    const m = uniqueMeasurement();
    const points = samplePoints(m, 400);
    for (let k = 0; k < 8; k++) await sink.write(points.slice(k * 50, k * 50 + 50));
    const during = sink.status();
    expect(during).toMatchObject({ dbReachable: false, writtenPoints: 0, spooledPoints: 400, queuedPoints: 0, droppedPoints: 0 });
    expect(during.spoolBytes).toBeGreaterThan(0);
    expect(during.lastError).toMatch(/ECONNREFUSED/);

    const vm = await vmOn(port, await tempDir('sw-outage-vm-'));
    await sink.drained();
    expect(sink.status()).toMatchObject({ dbReachable: true, writtenPoints: 400, spoolBytes: 0 });
    expect(await sampleCount(vm, m)).toBe(400 * FIELDS_PER_POINT);
    expectSamePoints(await readBackFromVictoria(vm, m), points);
  });

  it('database stopped mid-run and restarted on the same port and data dir: every point once, in order', async () => {
    const dataDir = await tempDir('sw-outage-vm-');
    let vm = await startVictoriaMetrics({ dataDir });
    const port = vm.port;
    const proxy = await startRecordingProxy(vm.url);
    cleanups.push(() => proxy.stop());
    const sink = await sinkTo(proxy.url, { dir: await tempDir('sw-outage-spool-'), limitBytes: 5_000_000, segmentBytes: 4_096 });
    const m = uniqueMeasurement();
    const points = samplePoints(m, 600);
    const chunk = (k: number) => points.slice(k * 20, k * 20 + 20);
    for (let k = 0; k < 10; k++) await sink.write(chunk(k));
    await sink.flush();
    expect(sink.status().spooledPoints).toBe(0);
    await vm.stop();
    for (let k = 10; k < 20; k++) await sink.write(chunk(k));
    await sink.flush();
    expect(sink.status().spooledPoints).toBeGreaterThan(0);
    vm = await vmOn(port, dataDir);
    for (let k = 20; k < 30; k++) await sink.write(chunk(k)); // behind the spool, even if the server is back
    await sink.drained();
    expect(sink.status()).toMatchObject({ writtenPoints: 600, spoolBytes: 0, queuedPoints: 0 });
    expect(await sampleCount(vm, m)).toBe(600 * FIELDS_PER_POINT);
    expectSamePoints(await readBackFromVictoria(vm, m), points);
    expect(proxy.acceptedTimes).toEqual(points.map((p) => p.timeMs)); // arrival order = write order
  });

  it('a new process drains the segments an earlier process left, before its own points', async () => {
    const port = await freePort();
    const spool = { dir: await tempDir('sw-outage-spool-'), limitBytes: 5_000_000, segmentBytes: 2_048 };
    const m = uniqueMeasurement();
    const points = samplePoints(m, 300);
    const first = await sinkTo(`http://127.0.0.1:${port}`, spool);
    await first.write(points.slice(0, 200));
    await first.close();
    const vm = await vmOn(port, await tempDir('sw-outage-vm-'));
    const second = await sinkTo(vm.url, spool);
    await second.write(points.slice(200));
    await second.drained();
    expect(second.status().writtenPoints).toBe(300);
    expectSamePoints(await readBackFromVictoria(vm, m), points);
  });

  it('block policy: a write the full spool cannot take rejects with SpoolFullError and is not counted as spooled', async () => {
    const port = await freePort();
    const sink = await sinkTo(`http://127.0.0.1:${port}`, { dir: await tempDir('sw-outage-spool-'), limitBytes: 4_000 }, { maxRetries: 0 });
    const points = samplePoints(uniqueMeasurement(), 60);
    await sink.write(points.slice(0, 20)); // about 3 kB of lines: fits
    await expect(sink.write(points.slice(20))).rejects.toBeInstanceOf(SpoolFullError);
    const status = sink.status();
    expect(status).toMatchObject({ spooledPoints: 20, queuedPoints: 0, spoolLimitBytes: 4_000 });
    expect(status.spoolFillRatio).toBeGreaterThan(0.5);
    expect(status.spoolFillRatio).toBeLessThanOrEqual(1);
  });
});

describe('InfluxSink token handling', () => {
  it('never shows the token in status, errors or console output, even when the server echoes it', async () => {
    const token = 'sw-token-7d1e0c5a9b';
    const seen: string[] = [];
    const server: Server = createServer((req, res) => {
      seen.push(req.headers.authorization ?? '');
      res.writeHead(401, { 'content-type': 'application/json' });
      res.end(JSON.stringify({ code: 'unauthorized', message: `bad credentials ${req.headers.authorization}` }));
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    cleanups.push(() => new Promise((resolve) => server.close(() => resolve())));
    const port = (server.address() as { port: number }).port;
    const printed: string[] = [];
    const capture = (...args: unknown[]) => void printed.push(args.map(String).join(' '));
    const spies = (['log', 'warn', 'error', 'info', 'debug'] as const).map((k) => vi.spyOn(console, k).mockImplementation(capture));
    try {
      const sink = await sinkTo(`http://127.0.0.1:${port}`, { dir: await tempDir('sw-token-spool-'), limitBytes: 1_000_000 }, { token, maxRetries: 1 });
      await sink.write(samplePoints(uniqueMeasurement(), 5));
      const status = sink.status();
      expect(seen[0]).toBe(`Token ${token}`); // the token was really sent, and echoed back
      expect(status.lastError).toMatch(/HTTP 401.*bad credentials Token \*\*\*/);
      expect(JSON.stringify(status)).not.toContain(token);
      await sink.close();
    } finally {
      for (const spy of spies) spy.mockRestore();
    }
    expect(printed.join('\n')).not.toContain(token);
  });
});

describe('InfluxSink and a database that refuses the content (HTTP 400)', () => {
  it('sets the lines aside in <spool>/refused/, resolves the write and does not block the spool', async () => {
    const server: Server = createServer((req, res) => {
      req.resume();
      req.on('end', () => {
        res.writeHead(400, { 'content-type': 'application/json' });
        res.end('{"code":"invalid","message":"unable to parse"}');
      });
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    cleanups.push(() => new Promise((resolve) => server.close(() => resolve())));
    const port = (server.address() as { port: number }).port;
    const dir = await tempDir('sw-refused-spool-');
    const sink = await sinkTo(`http://127.0.0.1:${port}`, { dir, limitBytes: 1_000_000 }, { now: () => Date.UTC(2026, 4, 2, 12) });
    const points = samplePoints(uniqueMeasurement(), 7);
    await sink.write(points);
    expect(sink.status()).toMatchObject({ refusedPoints: 7, spooledPoints: 0, spoolBytes: 0, dbReachable: false });
    expect(sink.status().lastError).toMatch(/HTTP 400.*unable to parse/);
    expect(await readdir(join(dir, 'refused'))).toEqual(['refused-2026-05-02.lp']);
    const text = await readFile(join(dir, 'refused', 'refused-2026-05-02.lp'), 'utf8');
    expect(text.trim().split('\n')).toHaveLength(7);
  });
});
