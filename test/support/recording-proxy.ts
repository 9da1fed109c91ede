/**
 * A loopback HTTP proxy in front of a real database that records, in arrival order, the timestamp of
 * every line the database accepted (HTTP 2xx). The database sorts by time, so the order the sink
 * sent its points in can only be seen on the way in.
 */
import { createServer } from 'node:http';
import { gunzipSync } from 'node:zlib';

export interface RecordingProxy {
  url: string;
  /** Timestamps (ms) of accepted lines, in the order the database accepted them. Mutated as requests pass. */
  acceptedTimes: number[];
  /** The accepted lines themselves, full precision, in arrival order. Mutated as requests pass. */
  acceptedLines: string[];
  stop(): Promise<void>;
}

export async function startRecordingProxy(targetUrl: string): Promise<RecordingProxy> {
  const acceptedTimes: number[] = [];
  const acceptedLines: string[] = [];
  const server = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', async () => {
      const raw = Buffer.concat(chunks);
      const body = req.headers['content-encoding'] === 'gzip' ? gunzipSync(raw) : raw;
      try {
        const upstream = await fetch(targetUrl + req.url, { method: req.method, body: req.method === 'POST' ? body : undefined });
        if (upstream.ok) {
          for (const line of body.toString('utf8').split('\n')) {
            if (line === '') continue;
            acceptedTimes.push(Number(line.slice(line.lastIndexOf(' ') + 1)));
            acceptedLines.push(line);
          }
        }
        res.writeHead(upstream.status);
        res.end(await upstream.text());
      } catch {
        res.writeHead(503);
        res.end('database unreachable');
      }
    });
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const port = (server.address() as { port: number }).port;
  return {
    url: `http://127.0.0.1:${port}`,
    acceptedTimes,
    acceptedLines,
    stop: () => new Promise((resolve) => server.close(() => resolve())),
  };
}
