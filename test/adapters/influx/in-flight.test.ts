import { lineBlockOf } from '../../../src/model/point.js';
import { createServer, type Server } from 'node:http';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { openInfluxSink } from '../../../src/adapters/influx/influx-sink.js';

/** A write endpoint that answers 204 after `delayMs`, counting requests open at once. */
async function slowWriteServer(delayMs: number): Promise<{ url: string; maxOpen: () => number; bodies: string[]; server: Server }> {
  let open = 0;
  let maxOpen = 0;
  const bodies: string[] = [];
  const server = createServer((req, res) => {
    open++;
    maxOpen = Math.max(maxOpen, open);
    let body = '';
    req.on('data', (c) => { body += c; });
    req.on('end', () => setTimeout(() => { bodies.push(body); open--; res.writeHead(204).end(); }, delayMs));
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  const { port } = server.address() as { port: number };
  return { url: `http://127.0.0.1:${port}`, maxOpen: () => maxOpen, bodies, server };
}

const cleanups: Array<() => Promise<unknown>> = [];
afterEach(async () => { while (cleanups.length) await cleanups.pop()!(); });

describe('InfluxSink batches in flight', () => {
  for (const maxInFlight of [1, 2, 3]) {
    it(`keeps at most ${maxInFlight} write request(s) open, and every line arrives once`, async () => {
      const srv = await slowWriteServer(40);
      cleanups.push(() => new Promise((r) => srv.server.close(r)));
      const dir = await mkdtemp(join(tmpdir(), 'sw-inflight-'));
      cleanups.push(() => rm(dir, { recursive: true, force: true }));
      const sink = await openInfluxSink({
        url: srv.url, org: 'o', bucket: 'b', token: null, timeout_ms: 2_000, gzipThreshold_bytes: Number.MAX_SAFE_INTEGER,
        batchSize: 10, flushInterval_ms: 5, maxInFlight, maxRetries: 0, minRetryDelay_ms: 10, maxRetryDelay_ms: 10,
        spool: { dir, limitBytes: 1_000_000 },
      });
      const writes = Array.from({ length: 60 }, (_, i) => sink.writeLines(lineBlockOf(`m v=${i} ${1_000 + i}`, 1)));
      await Promise.all(writes);
      await sink.close();
      expect(srv.maxOpen()).toBe(maxInFlight);
      const values = srv.bodies.flatMap((b) => b.split('\n')).map((l) => Number(l.split(' ')[1].slice(2))).sort((a, b) => a - b);
      expect(values).toEqual(Array.from({ length: 60 }, (_, i) => i));
      expect(sink.status()).toMatchObject({ writtenPoints: 60, queuedPoints: 0, spooledPoints: 0 });
    });
  }
});
