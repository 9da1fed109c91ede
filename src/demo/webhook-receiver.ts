import { appendFile } from 'node:fs/promises';
import { createServer, type Server } from 'node:http';

export interface WebhookReceiver {
  /** Ports listened on; ports that were taken are left out. */
  ports: number[];
  taken: number[];
  stop(): Promise<void>;
}

/**
 * The demo's stand-in for the crews' webhook receivers: answers 204 to every POST on the given
 * loopback ports and appends `{at, path, body}` to `file` (NDJSON). A port already taken is skipped
 * (the deliveries then go to whatever listens there, or fail and are recorded as failed).
 */
export async function startWebhookReceiver(host: string, ports: readonly number[], file: string): Promise<WebhookReceiver> {
  const servers: Server[] = [];
  const bound: number[] = [];
  const taken: number[] = [];
  for (const port of new Set(ports)) {
    const server = createServer((req, res) => {
      const chunks: Buffer[] = [];
      req.on('data', (c: Buffer) => { if (chunks.length < 64) chunks.push(c); });
      req.on('end', () => {
        const body = Buffer.concat(chunks).toString('utf8');
        appendFile(file, JSON.stringify({ at: new Date().toISOString(), path: req.url, body }) + '\n').catch(() => { /* the demo's receiver keeps no promises */ });
        res.writeHead(req.method === 'POST' ? 204 : 405).end();
      });
    });
    const ok = await new Promise<boolean>((done) => {
      server.once('error', () => done(false));
      server.listen(port, host, () => done(true));
    });
    if (ok) { servers.push(server); bound.push(port); } else taken.push(port);
  }
  return {
    ports: bound,
    taken,
    stop: async () => {
      await Promise.all(servers.map((s) => new Promise<void>((done) => { s.close(() => done()); s.closeAllConnections(); })));
    },
  };
}
