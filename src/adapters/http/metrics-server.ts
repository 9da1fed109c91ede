import { createServer, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { checkPageAccess } from './page-access.js';

export interface MetricsServerOptions {
  host: string;
  port: number;
  /** Required beyond loopback (checked by the caller with tokenProblem). */
  token: string | null;
  /** The exposition text, rendered at each scrape. */
  render(): Promise<string>;
  contentType: string;
  log: (event: string, detail?: Record<string, unknown>) => void;
}

export interface MetricsServer {
  /** The endpoint's address, e.g. http://127.0.0.1:9464/metrics */
  url: string;
  close(): Promise<void>;
}

function sendText(res: ServerResponse, status: number, text: string, headers: Record<string, string> = {}): void {
  res.writeHead(status, { 'content-type': 'text/plain; charset=utf-8', 'cache-control': 'no-store', 'x-content-type-options': 'nosniff', ...headers });
  res.end(text);
}

/**
 * The metrics endpoint's HTTP edge (node's http module): `GET /metrics` only. Every request passes
 * checkPageAccess first, the live page's check: the same token (bearer header, cookie, or the
 * query once), and on loopback a Host header naming loopback. Resolves once listening.
 */
export async function startMetricsServer(o: MetricsServerOptions): Promise<MetricsServer> {
  const server = createServer((req, res) => {
    const verdict = checkPageAccess({ method: req.method ?? 'GET', url: req.url ?? '/', headers: req.headers as Record<string, string | undefined> }, { token: o.token, boundHost: o.host });
    if (!verdict.ok) { sendText(res, verdict.status, `${verdict.reason}\n`); return; }
    if ('redirect' in verdict) { sendText(res, 303, '', { location: verdict.redirect, 'set-cookie': verdict.setCookie }); return; }
    const path = new URL(req.url ?? '/', 'http://metrics.invalid').pathname;
    if (path !== '/metrics') { sendText(res, 404, `no ${path}: the metrics are at /metrics\n`); return; }
    if (req.method !== 'GET' && req.method !== 'HEAD') { sendText(res, 405, 'GET only\n', { allow: 'GET, HEAD' }); return; }
    o.render().then((text) => sendText(res, 200, req.method === 'HEAD' ? '' : text, { 'content-type': o.contentType }), (err: unknown) => {
      o.log('metrics_failed', { message: err instanceof Error ? err.message : String(err) });
      sendText(res, 500, 'metrics could not be collected\n');
    });
  });
  await new Promise<void>((resolveListen, reject) => {
    server.once('error', (err: NodeJS.ErrnoException) => reject(err.code === 'EADDRINUSE'
      ? new Error(`metrics: port ${o.port} on ${o.host} is taken by another program; choose another metrics.listen (port 0: any free port)`)
      : err));
    server.listen(o.port, o.host, () => { server.off('error', reject); resolveListen(); });
  });
  const addr = server.address() as AddressInfo;
  const hostPart = addr.family === 'IPv6' ? `[${addr.address}]` : addr.address;
  return {
    url: `http://${hostPart}:${addr.port}/metrics`,
    async close() {
      await new Promise<void>((done) => { server.close(() => done()); server.closeAllConnections(); });
    },
  };
}
