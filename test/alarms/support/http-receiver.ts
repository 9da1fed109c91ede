import { createServer, type IncomingMessage, type Server } from 'node:http';

/** A request the local webhook receiver got. */
export interface Received {
  path: string;
  headers: IncomingMessage['headers'];
  body: unknown;
}

/**
 * A local HTTP receiver on a free 127.0.0.1 port. `respond` picks each answer's status (and an
 * optional delay before answering, ms). Stop it with `stop()`.
 */
export async function startReceiver(
  respond: (n: number) => { status: number; delayMs?: number } = () => ({ status: 200 }),
): Promise<{ url: string; received: Received[]; stop(): Promise<void> }> {
  const received: Received[] = [];
  let n = 0;
  const server: Server = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', () => {
      const text = Buffer.concat(chunks).toString('utf8');
      received.push({ path: req.url ?? '', headers: req.headers, body: text === '' ? null : JSON.parse(text) });
      const { status, delayMs = 0 } = respond(++n);
      setTimeout(() => {
        if (!res.destroyed) res.writeHead(status, { 'content-type': 'text/plain' }).end('ok');
      }, delayMs);
    });
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const address = server.address();
  const port = typeof address === 'object' && address !== null ? address.port : 0;
  return {
    url: `http://127.0.0.1:${port}/hook`,
    received,
    stop: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

/** Polls `check` every 20 ms until it returns true; throws `what` after timeoutMs. */
export async function waitFor(check: () => boolean, what: string, timeoutMs = 10_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!check()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}
