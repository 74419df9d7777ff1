/**
 * The daemon's web side, on 127.0.0.1 unless told otherwise (access.ts:
 * another address needs a token, and a token given is always asked for):
 * `GET /` the overlay (from
 * ui/dist, or a plain placeholder page until it is built), `GET /health`
 * the counters as JSON, the WebSocket `/events` pushing DaemonEvents, and
 * `POST /report` (report-route.ts) scoring MIDI files sent to it.
 *
 * A page elsewhere on the web can reach 127.0.0.1 from the performer's own
 * browser, so: a WebSocket handshake whose Origin is present and not this
 * daemon's page is refused (RFC 6455 §10.2 leaves that decision to the
 * server), and any request whose Host is not this daemon's (DNS rebinding)
 * is refused too (listening on every address, 0.0.0.0, any Host is
 * answered: the token guards it). Requests are small by construction — no bodies but
 * /report's, which are counted against its limit as they arrive, short URLs, a few clients, incoming WebSocket messages capped (clients need not
 * send anything) — and a client too slow to keep up is let go (it
 * reconnects and gets a fresh `hello` with the recent history).
 *
 * @example
 *   const web = await startWebServer({ port: 9751, uiDir: 'ui/dist', hello: () => helloEvent, health: () => ({ ok: true }) });
 *   web.url               // → 'http://127.0.0.1:9751/'
 *   web.broadcast({ type: 'clear', seq: 9, time: Date.now(), piece: 'a.mid' });
 */
import { readFile } from 'node:fs/promises';
import { existsSync } from 'node:fs';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import type { Duplex } from 'node:stream';
import { WebSocketServer, type WebSocket } from 'ws';
import type { DaemonEvent, HelloEvent } from '../../contract/events.js';
import { CAUTION } from '../../core/report.js';
import { contentType, staticFile } from './static-files.js';
import { DEFAULT_HOST, isWildcard, tokenGate, urlHost } from './access.js';
import { UsageError } from '../formats/user-error.js';
import type { RouteAnswer } from './report-route.js';

export const MAX_URL_LENGTH = 2048;
export const MAX_CLIENTS = 32;
/** Largest message a client may send on /events (RFC 6455 close 1009 past it). */
export const MAX_CLIENT_MESSAGE = 4096;
/** Queued bytes after which a client is too slow and is let go. */
export const MAX_CLIENT_BACKLOG = 1 << 20;
/** Most bytes of a refused request body read and dropped before the connection is cut. */
export const MAX_DISCARDED = 64 << 20;

export interface WebServerOptions {
  port: number;
  /** Address to listen on; default 127.0.0.1. */
  host?: string;
  /** Asked of every request when given. */
  token?: string | null;
  uiDir: string;
  hello(): HelloEvent;
  health(): Record<string, unknown>;
  /** Answers `POST /report`; absent, /report is off. */
  report?: (req: IncomingMessage, url: URL) => Promise<RouteAnswer>;
}

export interface WebServer {
  port: number;
  url: string;
  broadcast(e: DaemonEvent): void;
  clients(): number;
  /** Clients let go for falling behind. */
  slowClients(): number;
  close(): Promise<void>;
}

const PLACEHOLDER = (health: string) => `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>earwitness</title></head>
<body>
<h1>earwitness is listening</h1>
<p>The overlay page has not been built yet (<code>npm run build</code> builds it into <code>ui/dist</code>).
Live events are on the WebSocket <code>/events</code>; the counters are at <a href="/health">/health</a>.</p>
<pre>${health}</pre>
<p><small>${CAUTION}</small></p>
</body></html>
`;

const escapeHtml = (s: string): string => s.replace(/[&<>]/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;' })[c]!);

export async function startWebServer(options: WebServerOptions): Promise<WebServer> {
  let port = options.port;
  let slow = 0;
  const host = options.host ?? DEFAULT_HOST;
  const gate = tokenGate(options.token ?? null);
  const ownHosts = (): Set<string> => new Set([`127.0.0.1:${port}`, `localhost:${port}`, `${urlHost(host)}:${port}`]);
  const ownOrigins = (): Set<string> => new Set([...ownHosts()].map((h) => `http://${h}`));
  const hostAllowed = (h: string | undefined): boolean => isWildcard(host) || ownHosts().has(h ?? '');
  const unauthorized = `this daemon asks for its --token: open the overlay as http://${urlHost(isWildcard(host) ? DEFAULT_HOST : host)}:PORT/?token=…, or send the header "Authorization: Bearer …"`;
  const wss = new WebSocketServer({ noServer: true, maxPayload: MAX_CLIENT_MESSAGE });

  const send = (res: ServerResponse, status: number, type: string, body: string | Buffer, head: boolean, extra: Record<string, string> = {}): void => {
    res.writeHead(status, { 'content-type': type, 'cache-control': 'no-store', 'x-content-type-options': 'nosniff', ...extra });
    res.end(head ? undefined : body);
  };
  const text = (res: ServerResponse, status: number, body: string, extra: Record<string, string> = {}): void => send(res, status, 'text/plain; charset=utf-8', `${body}\n`, false, extra);

  const handle = async (req: IncomingMessage, res: ServerResponse): Promise<void> => {
    const url = req.url ?? '/';
    if (url.length > MAX_URL_LENGTH) return text(res, 414, `request URL over ${MAX_URL_LENGTH} characters`);
    if (!hostAllowed(req.headers.host)) return text(res, 421, `this daemon answers to ${[...ownHosts()].join(', ')} only`);
    if (!gate.allows(req, port)) return text(res, 401, unauthorized.replace('PORT', String(port)), { 'www-authenticate': 'Bearer realm="earwitness"' });
    if (url.split('?')[0] === '/report') return report(req, res);
    if (req.method !== 'GET' && req.method !== 'HEAD') return text(res, 405, 'only GET and HEAD', { allow: 'GET, HEAD' });
    if (Number(req.headers['content-length'] ?? 0) > 0 || req.headers['transfer-encoding']) return text(res, 413, 'requests to this daemon carry no body');
    const head = req.method === 'HEAD';
    const path = url.split('?')[0];
    if (path === '/health') return send(res, 200, 'application/json', JSON.stringify(options.health()), head);
    if (path === '/events') return text(res, 426, 'this is a WebSocket endpoint', { upgrade: 'websocket' });
    if (path === '/' && !existsSync(join(options.uiDir, 'index.html'))) {
      return send(res, 200, 'text/html; charset=utf-8', PLACEHOLDER(escapeHtml(JSON.stringify(options.health(), null, 2))), head);
    }
    const file = staticFile(options.uiDir, path);
    if (!file) return text(res, 404, 'not found');
    // The page's own script and style cannot carry ?token=: the cookie carries it for them.
    const cookie = gate.cookie(req, port);
    send(res, 200, contentType(file), await readFile(file), head, cookie ? { 'set-cookie': cookie } : {});
  };

  const report = async (req: IncomingMessage, res: ServerResponse): Promise<void> => {
    if (!options.report) return text(res, 404, 'POST /report is off: this daemon was started with --report-limit 0');
    if (req.method !== 'POST') return text(res, 405, 'POST MIDI files to /report', { allow: 'POST' });
    const a = await options.report(req, new URL(req.url ?? '/', 'http://localhost'));
    send(res, a.status, 'application/json', a.body, false, a.headers);
    if (a.unread) discard(req);
  };
  /**
   * The rest of a refused body, read and dropped, so that a client still
   * sending it (most do not read an answer before they have sent all) sees
   * the answer rather than a reset connection; past MAX_DISCARDED bytes,
   * or the request timeout, the connection is cut.
   */
  const discard = (req: IncomingMessage): void => {
    let dropped = 0;
    req.on('data', (chunk: Buffer) => {
      dropped += chunk.length;
      if (dropped > MAX_DISCARDED) req.socket.destroy();
    });
    req.resume();
  };

  const refuse = (socket: Duplex, status: number, reason: string): void => {
    socket.end(`HTTP/1.1 ${status} ${reason}\r\nconnection: close\r\ncontent-type: text/plain\r\n\r\n${reason}\n`);
  };

  const server = createServer({ maxHeaderSize: 8192, requestTimeout: 10_000 }, (req, res) => {
    handle(req, res).catch(() => {
      if (!res.headersSent) text(res, 500, 'internal error');
      else res.destroy();
    });
  });
  server.on('upgrade', (req, socket, head) => {
    const origin = req.headers.origin;
    if ((req.url ?? '').split('?')[0] !== '/events') return refuse(socket, 404, 'Not Found');
    if (!hostAllowed(req.headers.host)) return refuse(socket, 421, 'Misdirected Request');
    // RFC 6455 §10.2: a browser names the page that opened the socket; only our own page may listen.
    if (origin !== undefined && origin !== `http://${req.headers.host}` && !ownOrigins().has(origin)) return refuse(socket, 403, 'Forbidden');
    if (!gate.allows(req, port)) return refuse(socket, 401, 'Unauthorized');
    if (wss.clients.size >= MAX_CLIENTS) return refuse(socket, 503, 'Service Unavailable');
    wss.handleUpgrade(req, socket, head, (ws: WebSocket) => {
      ws.on('error', () => ws.terminate());
      ws.send(JSON.stringify(options.hello()));
    });
  });
  // Node's own answer to headers over maxHeaderSize is 431; keep it, as a handler of our own replaces it.
  server.on('clientError', (e: NodeJS.ErrnoException, socket) => (e.code === 'HPE_HEADER_OVERFLOW' ? refuse(socket, 431, 'Request Header Fields Too Large') : refuse(socket, 400, 'Bad Request')));

  await new Promise<void>((resolve, reject) => {
    server.once('error', (e: NodeJS.ErrnoException) =>
      reject(new UsageError(`--http-port ${options.port}: cannot listen on ${host} (${e.code === 'EADDRINUSE' ? 'the port is in use; choose another, or 0 for any free one' : e.message})`)),
    );
    server.listen(options.port, host, () => resolve());
  });
  port = (server.address() as AddressInfo).port;

  return {
    port,
    url: `http://${urlHost(isWildcard(host) ? DEFAULT_HOST : host)}:${port}/`,
    broadcast(e) {
      const data = JSON.stringify(e);
      for (const ws of wss.clients) {
        if (ws.readyState !== ws.OPEN) continue;
        if (ws.bufferedAmount > MAX_CLIENT_BACKLOG) {
          slow++;
          ws.terminate();
        } else ws.send(data);
      }
    },
    clients: () => wss.clients.size,
    slowClients: () => slow,
    async close() {
      // 1001 "going away" lets a page know to retry; whoever has not closed within 200 ms is cut off.
      for (const ws of wss.clients) ws.close(1001, 'earwitness is stopping');
      await new Promise((resolve) => setTimeout(resolve, wss.clients.size ? 200 : 0));
      for (const ws of wss.clients) ws.terminate();
      wss.close();
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
  };
}
