/**
 * The daemon's own web side (bridge/daemon/web-server.ts) with the test in
 * place of the scorer: it serves ui/dist and /events exactly as the daemon
 * does, Origin and Host checks included, while the test chooses every
 * event — for states the real daemon reaches only in circumstances a test
 * cannot stage (MIDI missing for a given reason, a given history).
 *
 * @example
 *   const d = await fakeDaemon();
 *   d.hello({ type: 'hello', ... });
 *   const connected = d.connected();
 *   await page.goto(d.url);
 *   await connected;
 *   d.push({ type: 'warning', ... });
 *   await d.stop();
 */
import { join } from 'node:path';
import { packageRoot } from '../../bridge/formats/package-root.js';
import { type WebServer, startWebServer } from '../../bridge/daemon/web-server.js';
import type { DaemonEvent, HelloEvent } from '../../contract/events.js';

export const UI_DIST = join(packageRoot(), 'ui', 'dist');

export interface FakeDaemon {
  url: string;
  port: number;
  /** What each page gets on connecting. */
  hello(e: HelloEvent): void;
  /** Sends to every open page. */
  push(e: DaemonEvent): void;
  /** Resolves when the next page opens its socket. */
  connected(): Promise<void>;
  /** Closes the server and every socket; `start()` opens it again on the same port. */
  stop(): Promise<void>;
  start(): Promise<void>;
}

export async function fakeDaemon(): Promise<FakeDaemon> {
  let hello: HelloEvent | null = null;
  let waiting: (() => void)[] = [];
  let web: WebServer;
  let port = 0;

  const start = async (): Promise<void> => {
    web = await startWebServer({
      port,
      uiDir: UI_DIST,
      hello: () => {
        if (!hello) throw new Error('fakeDaemon: a page connected before the test gave a hello');
        setImmediate(() => {
          waiting.forEach((w) => w());
          waiting = [];
        });
        return hello;
      },
      health: () => ({ ok: true }),
    });
    port = web.port;
  };

  await start();
  return {
    url: web!.url,
    port,
    hello: (e) => {
      hello = e;
    },
    push: (e) => web.broadcast(e),
    connected: () => new Promise((ok) => waiting.push(ok)),
    stop: () => web.close(),
    start,
  };
}
