/**
 * The daemon's web side: the overlay's files and nothing else, /health,
 * and /events. WebSocket checks follow RFC 6455 (../shared/reference/
 * check-values.md): the server decides on the handshake's Origin (§10.2),
 * and a message over the limit closes with 1009 "message too big".
 */
import { request } from 'node:http';
import { mkdirSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { createSocket } from 'node:dgram';
import osc from 'osc';
import { WebSocket } from 'ws';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTION } from '../../../core/report.js';
import { MAX_CLIENT_MESSAGE, type WebServer, startWebServer } from '../../../bridge/daemon/web-server.js';
import type { HelloEvent } from '../../../contract/events.js';
import { type SpawnedDaemon, health, listen, spawnDaemon, tempDir, writeCorpus } from '../../helpers/daemon.js';

/** A raw request: the path goes out exactly as written, as an attacker would send it. */
function get(port: number, path: string, options: { method?: string; headers?: Record<string, string>; body?: string } = {}): Promise<{ status: number; body: string; type: string }> {
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port, path, method: options.method ?? 'GET', headers: options.headers }, (res) => {
      let body = '';
      res.on('data', (d: Buffer) => (body += d.toString()));
      res.on('end', () => resolve({ status: res.statusCode!, body, type: String(res.headers['content-type']) }));
    });
    req.on('error', reject);
    req.end(options.body);
  });
}

const hello: HelloEvent = {
  type: 'hello', version: '0', corpus: { source: 'c', pieces: 1, notes: 1 },
  preset: { name: 'jam', window: 16, threshold: 0.6, minNotes: 12, consecutive: 3, warn: true }, midi: { available: false, detail: '' }, osc: { port: 0 }, history: [],
};

describe('serving the overlay', () => {
  let web: WebServer;
  let bare: WebServer;
  beforeAll(async () => {
    const root = tempDir('web');
    const ui = join(root, 'dist');
    mkdirSync(join(ui, 'assets'), { recursive: true });
    writeFileSync(join(ui, 'index.html'), '<!doctype html><title>overlay</title>');
    writeFileSync(join(ui, 'overlay.js'), 'console.log(1)');
    writeFileSync(join(ui, 'assets', 'roll.css'), 'body{}');
    writeFileSync(join(ui, '.env'), 'hidden');
    writeFileSync(join(root, 'secret.txt'), 'outside');
    symlinkSync(join(root, 'secret.txt'), join(ui, 'leak.txt'));
    web = await startWebServer({ port: 0, uiDir: ui, hello: () => hello, health: () => ({ ok: true, notes: 3 }) });
    bare = await startWebServer({ port: 0, uiDir: join(root, 'not-built'), hello: () => hello, health: () => ({ ok: true }) });
  });
  afterAll(async () => {
    await web?.close();
    await bare?.close();
  });

  it('serves index.html at / and other files of ui/dist by name, with their types', async () => {
    expect(await get(web.port, '/')).toMatchObject({ status: 200, body: '<!doctype html><title>overlay</title>', type: 'text/html; charset=utf-8' });
    expect(await get(web.port, '/overlay.js')).toMatchObject({ status: 200, type: 'text/javascript; charset=utf-8' });
    expect(await get(web.port, '/assets/roll.css')).toMatchObject({ status: 200, body: 'body{}' });
  });

  it.each([
    '/../secret.txt', '/%2e%2e/secret.txt', '/%2E%2E/secret.txt', '/..%2fsecret.txt', '/assets/..%2f..%2fsecret.txt', '/assets/../../secret.txt',
    '/%2fetc%2fpasswd', '//etc/passwd', '/..\\secret.txt', '/.env', '/leak.txt', '/missing.js', '/assets/', '/index.html%00.js',
  ])('%s → 404', async (path) => {
    const r = await get(web.port, path);
    expect(r.status).toBe(404);
    expect(r.body).not.toMatch(/outside|hidden/);
  });

  it('serves a plain placeholder page, with the caution, until the overlay is built', async () => {
    const r = await get(bare.port, '/');
    expect(r.status).toBe(200);
    expect(r.body).toMatch(/has not been built yet/);
    expect(r.body).toContain(CAUTION);
  });

  it('answers /health with JSON', async () => {
    const r = await get(web.port, '/health');
    expect(r.type).toBe('application/json');
    expect(JSON.parse(r.body)).toEqual({ ok: true, notes: 3 });
  });

  it('takes no bodies, no other methods, no long URLs and no other Host', async () => {
    expect((await get(web.port, '/health', { method: 'POST', body: 'x' })).status).toBe(405);
    expect((await get(web.port, '/health', { headers: { 'content-length': '5' }, body: 'hello' })).status).toBe(413);
    expect((await get(web.port, `/${'a'.repeat(3000)}`)).status).toBe(414);
    expect((await get(web.port, '/health', { headers: { host: 'attacker.example:80' } })).status).toBe(421);
  });
});

describe('/events', () => {
  let d: SpawnedDaemon;
  beforeAll(async () => {
    d = await spawnDaemon(['--corpus', writeCorpus().dir, '--preset', 'livecode']);
  });
  afterAll(async () => {
    await d?.stop();
  });

  const handshake = (headers: Record<string, string>): Promise<number> =>
    new Promise((resolve) => {
      const ws = new WebSocket(`ws://127.0.0.1:${d.http}/events`, { headers });
      ws.on('open', () => (ws.terminate(), resolve(101)));
      ws.on('unexpected-response', (_req, res) => resolve(res.statusCode!));
      ws.on('error', () => {});
    });

  it("refuses a handshake from another page's Origin (RFC 6455 §10.2); accepts its own, and clients that send none", async () => {
    expect(await handshake({ origin: 'https://attacker.example' })).toBe(403);
    expect(await handshake({ origin: `http://127.0.0.1:${d.http + 1}` })).toBe(403);
    expect(await handshake({ origin: `http://127.0.0.1:${d.http}` })).toBe(101);
    expect(await handshake({ origin: `http://localhost:${d.http}` })).toBe(101);
    expect(await handshake({})).toBe(101);
  });

  it('sends hello first, with the recent history, then live events', async () => {
    const socket = createSocket('udp4');
    const first = await listen(d.http);
    await new Promise<void>((resolve) =>
      socket.send(osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: 60 }, { type: 'i', value: 90 }, { type: 'f', value: 1 }] }, { metadata: true }), d.osc, '127.0.0.1', () => resolve()),
    );
    await first.next((e) => e.type === 'score');
    expect(first.events.map((e) => e.type)).toEqual(['hello', 'note', 'score']);
    socket.close();
    first.close();
    const later = await listen(d.http);
    const h = (await later.next((e) => e.type === 'hello')) as HelloEvent;
    expect(h).toMatchObject({ corpus: { pieces: 3 }, preset: { name: 'livecode', window: 8 }, osc: { port: d.osc }, midi: { available: false } });
    expect(h.history.map((e) => [e.type, e.seq])).toEqual([['score', 1]]);
    later.close();
    expect((await health(d.http)).clients).toBeLessThanOrEqual(1);
  });

  it('closes a client that sends an oversized message with 1009 (RFC 6455)', async () => {
    const ws = new WebSocket(`ws://127.0.0.1:${d.http}/events`);
    await new Promise((r) => ws.once('open', r));
    const code = await new Promise<number>((resolve) => {
      ws.once('close', (c) => resolve(c));
      ws.send('x'.repeat(MAX_CLIENT_MESSAGE + 1));
    });
    expect(code).toBe(1009);
    expect((await health(d.http)).ok).toBe(true);
  });
});
