import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { z } from 'zod';
import { AckCommandSchema } from '../../alarms/ack.js';
import { checkPageAccess } from './page-access.js';

/** Body of the page's acknowledge form: the fields and limits of the MQTT ack command, the user required (the page has no topic to name it). */
export const AckFormSchema = AckCommandSchema.required({ user: true });
export type AckForm = z.infer<typeof AckFormSchema>;

/** The processor's answer to an acknowledgement from the page. */
export type PageAckAnswer =
  | { outcome: 'acknowledged'; alarmId: string; user: string }
  | { outcome: 'refused'; code: string; reason: string }
  | { outcome: 'no_verdict'; reason: string };

export interface LivePageServerOptions {
  host: string;
  port: number;
  /** Required beyond loopback (checked by the caller with tokenProblem). */
  token: string | null;
  /** The page: HTML, script and style sheet, served as they are. */
  assets: { html: string; script: string; style: string };
  /** Full state for a page that (re)connects, as JSON-able data. */
  snapshot(): unknown;
  /** An acknowledgement from the page, already validated; resolves with the processor's verdict. */
  acknowledge(cmd: AckForm): Promise<PageAckAnswer>;
  log: (event: string, detail?: Record<string, unknown>) => void;
}

export interface LivePageServer {
  /** The page's address, e.g. http://127.0.0.1:8480/ */
  url: string;
  /** Sends one server-sent event to every open page. */
  broadcast(event: string, data: unknown): void;
  clients(): number;
  close(): Promise<void>;
}

/** A page whose connection holds more unsent bytes than this is too slow to follow and is dropped (it reconnects and gets a fresh snapshot). */
const MAX_UNSENT_BYTES = 8 * 1024 * 1024;
const MAX_BODY_BYTES = 16 * 1024;

const SECURITY_HEADERS = {
  'content-security-policy': "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'self'; form-action 'self'; frame-ancestors 'none'; base-uri 'none'",
  'x-content-type-options': 'nosniff',
  'referrer-policy': 'no-referrer',
  'cache-control': 'no-store',
};

function sendJson(res: ServerResponse, status: number, body: unknown): void {
  res.writeHead(status, { ...SECURITY_HEADERS, 'content-type': 'application/json; charset=utf-8' });
  res.end(JSON.stringify(body));
}

async function readBody(req: IncomingMessage): Promise<string | null> {
  let size = 0;
  const chunks: Buffer[] = [];
  for await (const chunk of req as AsyncIterable<Buffer>) {
    size += chunk.length;
    if (size > MAX_BODY_BYTES) return null;
    chunks.push(chunk);
  }
  return Buffer.concat(chunks).toString('utf8');
}

/**
 * The live page's HTTP edge (node's http module): the page and its two files, the event stream
 * (server-sent events: `snapshot` on connect, then whatever `broadcast` sends), and POST /ack. Every
 * request passes checkPageAccess first. Resolves once listening.
 */
export async function startLivePageServer(o: LivePageServerOptions): Promise<LivePageServer> {
  const streams = new Set<ServerResponse>();
  const writeEvent = (res: ServerResponse, event: string, json: string) => {
    if (res.writableLength > MAX_UNSENT_BYTES) { res.destroy(); streams.delete(res); return; }
    res.write(`event: ${event}\ndata: ${json}\n\n`);
  };

  const handle = async (req: IncomingMessage, res: ServerResponse): Promise<void> => {
    const verdict = checkPageAccess({ method: req.method ?? 'GET', url: req.url ?? '/', headers: req.headers as Record<string, string | undefined> }, { token: o.token, boundHost: o.host });
    if (!verdict.ok) { sendJson(res, verdict.status, { error: verdict.reason }); return; }
    if ('redirect' in verdict) {
      res.writeHead(303, { ...SECURITY_HEADERS, location: verdict.redirect, 'set-cookie': verdict.setCookie });
      res.end();
      return;
    }
    const path = new URL(req.url ?? '/', 'http://page.invalid').pathname;
    const route = `${req.method} ${path}`;
    if (route === 'GET /' || route === 'GET /index.html') {
      res.writeHead(200, { ...SECURITY_HEADERS, 'content-type': 'text/html; charset=utf-8' });
      res.end(o.assets.html);
    } else if (route === 'GET /page.js') {
      res.writeHead(200, { ...SECURITY_HEADERS, 'content-type': 'text/javascript; charset=utf-8' });
      res.end(o.assets.script);
    } else if (route === 'GET /page.css') {
      res.writeHead(200, { ...SECURITY_HEADERS, 'content-type': 'text/css; charset=utf-8' });
      res.end(o.assets.style);
    } else if (route === 'GET /events') {
      res.writeHead(200, { ...SECURITY_HEADERS, 'content-type': 'text/event-stream; charset=utf-8', connection: 'keep-alive' });
      res.write('retry: 3000\n\n');
      streams.add(res);
      req.on('close', () => streams.delete(res));
      writeEvent(res, 'snapshot', JSON.stringify(o.snapshot()));
    } else if (route === 'POST /ack') {
      // JSON only: a cross-site form cannot send it without the browser asking first (and being refused).
      if (!(req.headers['content-type'] ?? '').startsWith('application/json')) { sendJson(res, 415, { error: 'send the acknowledgement as application/json' }); return; }
      const text = await readBody(req);
      if (text === null) { sendJson(res, 413, { error: `body over ${MAX_BODY_BYTES} bytes` }); return; }
      let json: unknown;
      try { json = JSON.parse(text); } catch { sendJson(res, 400, { error: 'body is not JSON' }); return; }
      const parsed = AckFormSchema.safeParse(json);
      if (!parsed.success) {
        const i = parsed.error.issues[0];
        sendJson(res, 400, { error: `${i.path.join('.') || '(body)'}: ${i.message}` });
        return;
      }
      const answer = await o.acknowledge(parsed.data);
      sendJson(res, answer.outcome === 'acknowledged' ? 200 : answer.outcome === 'refused' ? 409 : 504, answer);
    } else {
      sendJson(res, 404, { error: `no ${route}` });
    }
  };

  const server = createServer((req, res) => {
    handle(req, res).catch((err: unknown) => {
      o.log('live_page_request_failed', { message: err instanceof Error ? err.message : String(err) });
      if (!res.headersSent) sendJson(res, 500, { error: 'internal error' });
      else res.destroy();
    });
  });
  await new Promise<void>((resolveListen, reject) => {
    server.once('error', (err: NodeJS.ErrnoException) => reject(err.code === 'EADDRINUSE'
      ? new Error(`live page: port ${o.port} on ${o.host} is taken by another program; choose another live_page.port (0: any free port)`)
      : err));
    server.listen(o.port, o.host, () => { server.off('error', reject); resolveListen(); });
  });
  const keepAlive = setInterval(() => { for (const s of streams) s.write(': still here\n\n'); }, 15_000);
  const addr = server.address() as AddressInfo;
  const hostPart = addr.family === 'IPv6' ? `[${addr.address}]` : addr.address;
  return {
    url: `http://${hostPart}:${addr.port}/`,
    broadcast(event, data) {
      if (streams.size === 0) return;
      const json = JSON.stringify(data);
      for (const s of streams) writeEvent(s, event, json);
    },
    clients: () => streams.size,
    async close() {
      clearInterval(keepAlive);
      for (const s of streams) s.end();
      streams.clear();
      await new Promise<void>((done) => { server.close(() => done()); server.closeAllConnections(); });
    },
  };
}
