/**
 * Security of `earwitness listen`, as a user runs it (`node dist/bridge/cli.js`):
 *
 * - it binds 127.0.0.1 only by default, HTTP and OSC alike (read back from
 *   the kernel's socket tables, /proc/net/tcp and udp, proc(5));
 * - `--host` with an address other machines reach refuses to start without
 *   `--token`, saying why; loopback addresses need none;
 * - with `--token` (tested on 127.0.0.1), the overlay and its files,
 *   /health and /events answer only requests that carry it (`?token=`,
 *   `Authorization: Bearer`, or the cookie the page is given), compared in
 *   constant time; a handshake from another page's Origin is refused even
 *   with the token (RFC 6455 §10.2);
 * - the static server hands out the overlay's built files only: `../`,
 *   `%2e%2e`, `%2f`, `%5c`, double encoding and the like get 404 and never
 *   the package's own files;
 * - size limits: request headers (431), URLs (414), bodies (413),
 *   WebSocket messages (1009, RFC 6455 §7.4.1), OSC packets up to the
 *   largest UDP datagram, bundles nested or scheduled past their caps;
 * - nothing received is run as code: no eval, Function, vm or HTML sinks in
 *   the sources that handle it.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync, readdirSync } from 'node:fs';
import { request } from 'node:http';
import { join } from 'node:path';
import osc from 'osc';
import { WebSocket } from 'ws';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MAX_OSC_PACKET, MAX_SCHEDULED } from '../../../bridge/daemon/osc-input.js';
import { MAX_CLIENT_MESSAGE } from '../../../bridge/daemon/web-server.js';
import { CLI, ROOT, type SpawnedDaemon, eventually, spawnDaemon, tempDir, writeCorpus } from '../../helpers/daemon.js';
import { oscSender } from '../../helpers/proc.js';

const TOKEN = 'stage-left-0427-xyz';
const corpus = writeCorpus().dir;

interface Answer {
  status: number;
  body: string;
  headers: Record<string, string | string[] | undefined>;
}

/** A request with the path exactly as written (no URL normalisation), as an attacker sends it. */
function raw(port: number, path: string, headers: Record<string, string> = {}, method = 'GET', body?: string, host = '127.0.0.1'): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const req = request({ host, port, path, method, headers }, (res) => {
      let text = '';
      res.on('data', (d: Buffer) => (text += d.toString()));
      res.on('end', () => resolve({ status: res.statusCode!, body: text, headers: res.headers }));
    });
    req.on('error', reject);
    req.end(body);
  });
}

/** The status of an /events handshake: 101, or what the daemon answered instead. */
function handshake(port: number, query: string, headers: Record<string, string>, host = '127.0.0.1'): Promise<number> {
  return new Promise((resolve) => {
    const ws = new WebSocket(`ws://${host}:${port}/events${query}`, { headers });
    ws.on('open', () => (ws.terminate(), resolve(101)));
    ws.on('unexpected-response', (_req, res) => resolve(res.statusCode!));
    ws.on('error', () => {});
  });
}

/** Local addresses of sockets on `port` in a /proc/net table, as "ADDR:PORT" in the kernel's hex. */
function bound(table: string, port: number, listening: boolean): string[] {
  const hexPort = port.toString(16).toUpperCase().padStart(4, '0');
  return readFileSync(`/proc/net/${table}`, 'utf8').split('\n').slice(1).map((l) => l.trim().split(/\s+/))
    .filter((f) => f.length > 3 && f[1].endsWith(`:${hexPort}`) && (!listening || f[3] === '0A')) // 0A = TCP_LISTEN
    .map((f) => f[1]);
}

const listenRun = (...args: string[]) => spawnSync(process.execPath, [CLI, 'listen', '--corpus', corpus, '--osc-port', '0', '--http-port', '0', '--log', join(tempDir('sec-log'), 's.db'), ...args], { cwd: ROOT, encoding: 'utf8', timeout: 20_000 });

describe('binding', () => {
  it('binds HTTP and OSC to 127.0.0.1 only by default', async () => {
    const d = await spawnDaemon(['--corpus', corpus]);
    try {
      // 0100007F is 127.0.0.1 in the kernel's little-endian hex (proc(5)).
      expect(bound('tcp', d.http, true)).toEqual([`0100007F:${d.http.toString(16).toUpperCase().padStart(4, '0')}`]);
      expect(bound('udp', d.osc, false)).toEqual([`0100007F:${d.osc.toString(16).toUpperCase().padStart(4, '0')}`]);
      expect(bound('tcp6', d.http, true)).toEqual([]);
      expect(bound('udp6', d.osc, false)).toEqual([]);
      expect(d.stdout()).toContain(`overlay: http://127.0.0.1:${d.http}/\n`);
    } finally {
      await d.stop();
    }
  });

  it.each(['0.0.0.0', '::', '192.0.2.10', '10.1.2.3', '::ffff:192.0.2.10'])('--host %s without --token refuses to start, saying why', (host) => {
    const r = listenRun('--host', host);
    expect(r.status).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toBe(`earwitness: --host ${host} lets other machines reach the overlay, /events and /health, and so hear what you play as you play it; it needs --token SECRET too (at least 12 (at most 256) letters, digits, ".", "_", "~" or "-"), which every request must then carry\n`);
  });

  it('a bad --host or --token is refused by name; with a token an unreachable address fails to bind, naming it', () => {
    expect(listenRun('--host', 'stage.example').stderr).toMatch(/^earwitness: --host stage.example: not an IP address; give 127.0.0.1/);
    expect(listenRun('--token', 'short').stderr).toMatch(/^earwitness: --token: give at least 12 .*\(got 5 characters\)\n$/);
    expect(listenRun('--token', 'has spaces in it ok').stderr).toMatch(/^earwitness: --token: give at least 12/);
    // 192.0.2.0/24 is TEST-NET-1 (RFC 5737): no interface has it, so the check passes and binding fails.
    const r = listenRun('--host', '192.0.2.10', '--token', TOKEN);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/^earwitness: --http-port 0: cannot listen on 192\.0\.2\.10 \(/);
  });

  it('--host ADDR: requests must name ADDR (or 127.0.0.1, localhost) as their Host, and pages their Origin (DNS rebinding, RFC 6455 §10.2)', async () => {
    const d = await spawnDaemon(['--corpus', corpus, '--host', '127.0.0.2', '--token', TOKEN]);
    try {
      const at = (headers: Record<string, string>) => raw(d.http, `/health?token=${TOKEN}`, headers, 'GET', undefined, '127.0.0.2');
      expect((await at({})).status).toBe(200);
      expect((await at({ host: `localhost:${d.http}` })).status).toBe(200);
      expect((await at({ host: `attacker.example:${d.http}` })).status).toBe(421);
      expect((await at({ host: `127.0.0.2:${d.http + 1}` })).status).toBe(421);
      expect(await handshake(d.http, `?token=${TOKEN}`, { origin: `http://127.0.0.2:${d.http}` }, '127.0.0.2')).toBe(101);
      expect(await handshake(d.http, `?token=${TOKEN}`, { origin: `http://attacker.example:${d.http}` }, '127.0.0.2')).toBe(403);
      expect(d.stdout()).toContain(`overlay: http://127.0.0.2:${d.http}/?token=${TOKEN}\n`);
    } finally {
      await d.stop();
    }
  });

  it.each(['127.0.0.1', '127.0.0.2', 'localhost'])('--host %s (loopback) needs no token', async (host) => {
    const d = await spawnDaemon(['--corpus', corpus, '--host', host]);
    const stopped = await d.stop();
    expect(stopped.code).toBe(0);
    expect(d.stdout()).toContain(`overlay: http://${host}:${d.http}/`);
  });
});

describe('with --token', () => {
  let d: SpawnedDaemon;
  beforeAll(async () => {
    d = await spawnDaemon(['--corpus', corpus, '--token', TOKEN]);
  });
  afterAll(async () => {
    await d?.stop();
  });
  const own = () => ({ origin: `http://127.0.0.1:${d.http}` });

  it('prints the overlay address with its token', () => {
    expect(d.stdout()).toContain(`overlay: http://127.0.0.1:${d.http}/?token=${TOKEN}\n`);
  });

  it.each(['/', '/index.html', '/overlay.js', '/overlay.css', '/health', '/missing.js', '/../package.json'])('%s without the token, or with a wrong one: 401, and nothing else said', async (path) => {
    for (const headers of [{}, { authorization: 'Bearer wrong-token-0000' }, { authorization: `Basic ${TOKEN}` }, { cookie: `earwitness-token-${d.http}=nope` }, { cookie: `earwitness-token-${d.http + 1}=${TOKEN}` }]) {
      const r = await raw(d.http, path, headers);
      expect(r.status, JSON.stringify(headers)).toBe(401);
      expect(r.headers['www-authenticate']).toBe('Bearer realm="earwitness"');
      expect(r.body).toMatch(/^this daemon asks for its --token/);
      expect(r.body).not.toMatch(/notes|corpus|<html/i);
    }
    for (const wrong of ['?token=', `?token=${TOKEN}x`, `?token=${TOKEN.slice(1)}`, `?Token=${TOKEN}`]) expect((await raw(d.http, `${path}${wrong}`)).status).toBe(401);
  });

  it('answers with the token: ?token= (and hands the page a cookie for its own files), Bearer, or that cookie', async () => {
    const page = await raw(d.http, `/?token=${TOKEN}`);
    expect(page.status).toBe(200);
    expect(page.body).toContain('overlay.js');
    const cookie = String(page.headers['set-cookie']);
    expect(cookie).toBe(`earwitness-token-${d.http}=${TOKEN}; HttpOnly; SameSite=Strict; Path=/`);
    // What a browser then does: the page's script and style go with the cookie, not the query.
    const jar = cookie.split(';')[0];
    expect((await raw(d.http, '/overlay.js', { cookie: `theme=dark; ${jar}` })).status).toBe(200);
    expect((await raw(d.http, '/overlay.css', { cookie: jar })).status).toBe(200);
    const h = await raw(d.http, '/health', { authorization: `Bearer ${TOKEN}` });
    expect(h.status).toBe(200);
    expect(JSON.parse(h.body).ok).toBe(true);
    expect((await raw(d.http, `/health?token=${TOKEN}`)).status).toBe(200);
    expect((await raw(d.http, '/health', { authorization: `Bearer ${TOKEN}` })).headers['set-cookie']).toBeUndefined();
  });

  it('/events: the token is asked for, and another page may not listen even with it (RFC 6455 §10.2)', async () => {
    expect(await handshake(d.http, '', own())).toBe(401);
    expect(await handshake(d.http, '?token=wrong-token-0000', own())).toBe(401);
    expect(await handshake(d.http, `?token=${TOKEN}`, own())).toBe(101); // the overlay page (ui/src/connection.ts forwards ?token=)
    expect(await handshake(d.http, '', { ...own(), authorization: `Bearer ${TOKEN}` })).toBe(101);
    expect(await handshake(d.http, '', { ...own(), cookie: `earwitness-token-${d.http}=${TOKEN}` })).toBe(101);
    expect(await handshake(d.http, `?token=${TOKEN}`, { origin: 'https://attacker.example' })).toBe(403);
    expect(await handshake(d.http, `?token=${TOKEN}`, { origin: 'null' })).toBe(403);
  });

  it.each([
    '/../package.json', '/%2e%2e/package.json', '/%2E%2E/package.json', '/..%2fpackage.json', '/%2e%2e%2fpackage.json', '/.%2e/package.json',
    '/%252e%252e/package.json', '/..%5cpackage.json', '/..\\package.json', '/index.html/../../package.json', '/ui/dist/../../package.json',
    '//package.json', '/..;/package.json', '/%00', '/index.html%00', '/.%00./package.json', '/../bridge/cli.ts', '/../../../../etc/passwd',
    '/%c0%ae%c0%ae/package.json', '/overlay.js/', '/.git/config', '/%2e/index.html',
  ])('%s with the token: 404, never a file outside ui/dist', async (path) => {
    const r = await raw(d.http, `${path}${path.includes('?') ? '&' : '?'}token=${TOKEN}`);
    expect(r.status).toBe(404);
    expect(r.body).not.toMatch(/"name": "earwitness"|root:|#!\/usr\/bin\/env node|\[core\]/);
  });
});

describe('size limits', () => {
  let d: SpawnedDaemon;
  beforeAll(async () => {
    d = await spawnDaemon(['--corpus', corpus, '--token', TOKEN]);
  });
  afterAll(async () => {
    await d?.stop();
  });
  const auth = { authorization: `Bearer ${TOKEN}` };

  it('HTTP: headers over 8 KiB 431, URLs over 2,048 characters 414, any body 413, methods other than GET/HEAD 405', async () => {
    expect((await raw(d.http, '/health', { ...auth, 'x-pad': 'a'.repeat(9000) })).status).toBe(431);
    expect((await raw(d.http, `/health?token=${TOKEN}&pad=${'a'.repeat(2100)}`)).status).toBe(414);
    expect((await raw(d.http, '/health', { ...auth, 'content-length': '5' }, 'GET', 'hello')).status).toBe(413);
    expect((await raw(d.http, '/health', { ...auth, 'transfer-encoding': 'chunked' }, 'GET', 'hello')).status).toBe(413);
    expect((await raw(d.http, '/health', auth, 'POST', 'x')).status).toBe(405);
    expect((await raw(d.http, '/health', auth)).status).toBe(200);
  });

  it(`WebSocket: a message over ${MAX_CLIENT_MESSAGE} bytes closes with 1009 (RFC 6455 §7.4.1); one at the limit is ignored`, async () => {
    const open = (): Promise<WebSocket> => new Promise((resolve) => {
      const ws = new WebSocket(`ws://127.0.0.1:${d.http}/events?token=${TOKEN}`);
      ws.once('open', () => resolve(ws));
    });
    const closed = (ws: WebSocket, ms: number): Promise<number | null> => new Promise((resolve) => {
      const timer = setTimeout(() => resolve(null), ms);
      ws.once('close', (code) => (clearTimeout(timer), resolve(code)));
    });
    const big = await open();
    big.send('x'.repeat(MAX_CLIENT_MESSAGE + 1));
    expect(await closed(big, 5000)).toBe(1009);
    const fits = await open();
    fits.send('x'.repeat(MAX_CLIENT_MESSAGE));
    expect(await closed(fits, 300)).toBeNull(); // still open
    fits.terminate();
  });

  it(`OSC: packets over ${MAX_OSC_PACKET} bytes up to the largest UDP datagram, bundles nested too deep, more than ${MAX_SCHEDULED} messages scheduled — each counted, none kept`, async () => {
    const sender = oscSender(d.osc);
    const healthOf = async () => JSON.parse((await raw(d.http, '/health', auth)).body) as Record<string, any>;
    await sender.send(new Uint8Array(65_507).fill(0x2f)); // 65,535 − 8 (UDP header) − 20 (IPv4 header): the largest datagram over IPv4
    await sender.send(new Uint8Array(MAX_OSC_PACKET + 1).fill(0x2f));
    let nested: object = { address: '/ew/reset', args: [] };
    for (let k = 0; k < 10; k++) nested = { timeTag: { raw: [0, 1] }, packets: [nested] };
    await sender.send(osc.writePacket(nested as never, { metadata: true }));
    // Bundles 30 s ahead, 100 notes each, past the schedule's cap.
    const later = osc.timeTag(30);
    const bundle = osc.writePacket({ timeTag: later, packets: Array.from({ length: 100 }, () => ({ address: '/ew/note', args: [{ type: 'i', value: 60 }, { type: 'i', value: 90 }, { type: 'f', value: 1 }] })) }, { metadata: true });
    expect(bundle.length).toBeLessThanOrEqual(MAX_OSC_PACKET);
    const bundles = Math.ceil(MAX_SCHEDULED / 100) + 2;
    for (let k = 0; k < bundles; k++) await sender.send(bundle);
    const overload = bundles * 100 - MAX_SCHEDULED;
    const h = await eventually(healthOf, (v) => v.badInput.oversized === 2 && v.badInput.malformed === 1 && v.badInput.overload === overload);
    sender.close();
    expect(h.badInput).toEqual({ oversized: 2, malformed: 1, overload });
    expect(h.scheduled).toBe(MAX_SCHEDULED);
    expect(h.ok).toBe(true);
  });
});

describe('incoming data is never run as code', () => {
  it('no eval, Function, vm, dynamic import or HTML sink in core/, bridge/ or the overlay (ui/src)', () => {
    const sources = (dir: string): string[] =>
      readdirSync(join(ROOT, dir), { recursive: true, withFileTypes: true })
        .filter((e) => e.isFile() && /\.(ts|mjs|js)$/.test(e.name))
        .map((e) => join(e.parentPath, e.name));
    const files = ['core', 'bridge', 'ui/src'].flatMap(sources);
    expect(files.length).toBeGreaterThan(50);
    const SINKS = /\beval\s*\(|\bnew\s+Function\b|\bFunction\s*\(|['"]node:vm['"]|\bimport\s*\(\s*[^'"\s]|\.innerHTML\b|\.outerHTML\b|insertAdjacentHTML|document\.write|setTimeout\s*\(\s*['"`]|setInterval\s*\(\s*['"`]/;
    const found = files.flatMap((f) => readFileSync(f, 'utf8').split('\n').map((line, i) => ({ f, i, line })).filter(({ line }) => SINKS.test(line) && !/^\s*(\*|\/\/)/.test(line)));
    expect(found.map(({ f, i, line }) => `${f}:${i + 1}: ${line.trim()}`)).toEqual([]);
  });
});
