/**
 * `POST /report` on the running daemon (`node dist/bridge/cli.js listen`),
 * checked against the CLI: the answer is the very document
 * `report --json` prints for the same files and settings, a raw SMF body
 * and a multipart body of two alike. Then what it refuses, with the status
 * RFC 9110 §15 gives each case: 400 a bad or unknown query parameter
 * (named), 401 no token when one is set (as every other route), 405 a GET,
 * 413 a body over `--report-limit` (declared, or counted as it streams in,
 * the daemon answering before the sender has finished), 415 a body that is
 * not MIDI, 422 a damaged file, named with the reason the CLI gives.
 *
 * curl, a reference HTTP client, sends the raw and multipart bodies where
 * it is installed (Debian's curl; skipped by name otherwise); node's fetch
 * and http otherwise. Query files are the invented demo queries in
 * presets/demo/queries.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { request } from 'node:http';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CLI, ROOT, type SpawnedDaemon, spawnDaemon, tempDir } from '../../helpers/daemon.js';
import { tool } from '../../helpers/which.js';

const CORPUS = 'presets/demo/corpus';
const QUERIES = join(ROOT, 'presets', 'demo', 'queries');
const TOKEN = 'notebook-0427-token';
/** Smaller than quote.mid (774 bytes), larger than fresh.mid (555 bytes). */
const SMALL_LIMIT = 700;
const curl = tool('curl', 'curl');

/** `earwitness report --json …` as a user runs it, in `cwd`: the document it prints. */
function cliReport(args: string[], cwd = ROOT): Record<string, unknown> {
  const r = spawnSync(process.execPath, [CLI, 'report', '--corpus', join(ROOT, CORPUS), '--json', ...args], { cwd, encoding: 'utf8', timeout: 60_000 });
  expect(r.status, r.stderr).toBe(0);
  return JSON.parse(r.stdout) as Record<string, unknown>;
}

interface Answer {
  status: number;
  headers: Record<string, string | string[] | undefined>;
  text: string;
  json: Record<string, any>;
}

/**
 * POSTs to /report on a connection of its own (no keep-alive: a pooled
 * connection the daemon closed while a test's spawnSync held the event loop
 * would fail the next request). Bodies are serialized by fetch's own
 * Request (FormData as multipart/form-data, RFC 7578).
 */
async function post(port: number, query: string, body: Blob | FormData | string | null, headers: Record<string, string> = {}): Promise<Answer> {
  const serialized = new Request('http://127.0.0.1/', { method: 'POST', body });
  const bytes = Buffer.from(await serialized.arrayBuffer());
  const type = serialized.headers.get('content-type');
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port, path: `/report${query}`, method: 'POST', agent: false, headers: { ...(type ? { 'content-type': type } : {}), 'content-length': String(bytes.length), ...headers } }, (res) => {
      let text = '';
      res.on('data', (d: Buffer) => (text += d.toString()));
      res.on('end', () => {
        let json: Record<string, any> = {};
        try {
          json = JSON.parse(text) as Record<string, any>;
        } catch {
          // A text answer (401, 405): the test reads `text`.
        }
        resolve({ status: res.statusCode!, headers: res.headers, text, json });
      });
    });
    req.on('error', reject);
    req.end(bytes);
  });
}

const midiFile = (name: string): Blob => new Blob([readFileSync(join(QUERIES, name))], { type: 'audio/midi' });

let open: SpawnedDaemon;
let guarded: SpawnedDaemon;
beforeAll(async () => {
  [open, guarded] = await Promise.all([
    spawnDaemon(['--corpus', CORPUS, '--preset', 'livecode']),
    spawnDaemon(['--corpus', CORPUS, '--preset', 'livecode', '--report-limit', String(SMALL_LIMIT), '--token', TOKEN]),
  ]);
}, 60_000);
afterAll(async () => {
  await Promise.all([open?.stop(), guarded?.stop()]);
});

describe('POST /report answers what report --json prints', () => {
  it.skipIf(!curl.path)(`one SMF as the raw body (curl --data-binary)${curl.path ? '' : ` — ${curl.label}`}`, () => {
    const file = 'presets/demo/queries/quote.mid';
    const r = spawnSync('curl', ['-sS', '--fail-with-body', '--data-binary', `@${file}`, '-H', 'Content-Type: audio/midi', `http://127.0.0.1:${open.http}/report?window=16&file=${file}`], { cwd: ROOT, encoding: 'utf8' });
    expect(r.status, r.stdout + r.stderr).toBe(0);
    const answered = JSON.parse(r.stdout) as Record<string, any>;
    expect(answered).toEqual(cliReport([file]));
    expect(answered.caution).toMatch(/^A similarity score is evidence for a musician's judgement, not a legal finding\./);
    expect(answered.queries[0].windows.length).toBeGreaterThan(0);
  });

  it('the settings as query parameters, read as the CLI reads its options', async () => {
    const a = await post(open.http, '?window=8&hop=4&pitch=diatonic&tolerance=0.1&min-notes=4&file=variation.mid', midiFile('variation.mid'), { 'content-type': 'audio/x-midi' });
    expect(a.status).toBe(200);
    expect(a.json).toEqual(cliReport(['variation.mid', '--window', '8', '--hop', '4', '--pitch', 'diatonic', '--tolerance', '0.1', '--min-notes', '4'], QUERIES));
    expect(a.json.settings).toMatchObject({ window: 8, hop: 4, pitch: 'morphetic', minNotes: 4 });
  });

  it('two files as multipart/form-data (RFC 7578): the report of both', async () => {
    const expected = cliReport(['quote.mid', 'fresh.mid'], QUERIES);
    if (curl.path) {
      // curl -F writes each file as a part with its filename (RFC 7578 §4.2).
      const r = spawnSync('curl', ['-sS', '--fail-with-body', '-F', 'a=@quote.mid;type=audio/midi', '-F', 'b=@fresh.mid', `http://127.0.0.1:${open.http}/report`], { cwd: QUERIES, encoding: 'utf8' });
      expect(r.status, r.stdout + r.stderr).toBe(0);
      expect(JSON.parse(r.stdout)).toEqual(expected);
    }
    const form = new FormData();
    form.append('a', midiFile('quote.mid'), 'quote.mid');
    form.append('b', midiFile('fresh.mid'), 'fresh.mid');
    const a = await post(open.http, '', form);
    expect(a.status).toBe(200);
    expect(a.json).toEqual(expected);
    expect(a.json.queries.map((q: { file: string }) => q.file)).toEqual(['quote.mid', 'fresh.mid']);
  });
});

describe('POST /report refuses, saying why', () => {
  it('400 for a bad or unknown query parameter, named, in the words the CLI uses for its option', async () => {
    const bad = await post(open.http, '?window=0', midiFile('fresh.mid'), { 'content-type': 'audio/midi' });
    expect(bad.status).toBe(400);
    expect(bad.json).toEqual({ error: 'window must be a positive number, got "0"', parameter: 'window' });
    const cli = spawnSync(process.execPath, [CLI, 'report', 'presets/demo/queries/fresh.mid', '--corpus', CORPUS, '--window', '0'], { cwd: ROOT, encoding: 'utf8' });
    expect(cli.stderr).toContain('--window must be a positive number, got "0"');
    for (const [query, parameter] of [['?min-notes=2.5', 'min-notes'], ['?tolerance=1', 'tolerance'], ['?pitch=sideways', 'pitch'], ['?windows=8', 'windows'], ['?hop=4&hop=8', 'hop']]) {
      const a = await post(open.http, query, midiFile('fresh.mid'), { 'content-type': 'audio/midi' });
      expect([a.status, a.json.parameter], query).toEqual([400, parameter]);
      expect(a.json.error).toContain(parameter);
    }
  });

  it('415 for a body that is not MIDI (RFC 9110 §15.5.16), naming the types it takes', async () => {
    const a = await post(open.http, '', 'X:1\nK:C\nCDEF|\n', { 'content-type': 'text/plain' });
    expect(a.status).toBe(415);
    expect(a.json.error).toMatch(/^a body of type text\/plain cannot be read/);
    expect(a.json.accepted).toEqual(['audio/midi', 'audio/x-midi', 'multipart/form-data']);
  });

  it('422 for a damaged file, named with the reason report gives (SMF 1.0: a track shorter than its chunk length)', async () => {
    // The first half of a good file: its last track chunk declares more bytes than follow (SMF 1.0, chunks).
    const whole = readFileSync(join(QUERIES, 'cadence.mid'));
    const truncated = whole.subarray(0, whole.length >> 1);
    const dir = tempDir('damaged');
    writeFileSync(join(dir, 'truncated.mid'), truncated);
    const cli = spawnSync(process.execPath, [CLI, 'report', 'truncated.mid', '--corpus', join(ROOT, CORPUS)], { cwd: dir, encoding: 'utf8' });
    const reason = /skipped truncated\.mid: (.*)\n/.exec(cli.stderr)?.[1];
    expect(reason, cli.stderr).toBeTruthy();
    const a = await post(open.http, '?file=truncated.mid', new Blob([truncated]), { 'content-type': 'audio/midi' });
    expect(a.status).toBe(422);
    expect(a.json).toEqual({ error: 'no readable query file among truncated.mid', skipped: [{ file: 'truncated.mid', error: reason }] });
    // One damaged file among good ones is listed as skipped, as the CLI lists it, and the rest is reported.
    const form = new FormData();
    form.append('a', midiFile('fresh.mid'), 'fresh.mid');
    form.append('b', new Blob([truncated]), 'truncated.mid');
    const mixed = await post(open.http, '', form);
    expect(mixed.status).toBe(200);
    expect(mixed.json.skipped).toEqual([{ file: 'truncated.mid', error: reason }]);
    expect(mixed.json.queries.map((q: { file: string }) => q.file)).toEqual(['fresh.mid']);
  });

  it('405 for anything but POST (RFC 9110 §15.5.6), with Allow', async () => {
    const r = await fetch(`http://127.0.0.1:${open.http}/report`);
    expect(r.status).toBe(405);
    expect(r.headers.get('allow')).toBe('POST');
  });

  it('401 without the token when one is set, as the overlay and /health (access.ts)', async () => {
    const none = await post(guarded.http, '', midiFile('fresh.mid'), { 'content-type': 'audio/midi' });
    expect(none.status).toBe(401);
    expect(none.headers['www-authenticate']).toBe('Bearer realm="earwitness"');
    expect(none.text).toMatch(/^this daemon asks for its --token/);
    expect((await post(guarded.http, '?token=notebook-0427-wrong', midiFile('fresh.mid'), { 'content-type': 'audio/midi' })).status).toBe(401);
    expect((await post(guarded.http, '', midiFile('fresh.mid'), { 'content-type': 'audio/midi', authorization: `Bearer ${TOKEN}` })).status).toBe(200);
    expect((await post(guarded.http, `?token=${TOKEN}&file=fresh.mid`, midiFile('fresh.mid'), { 'content-type': 'audio/midi' })).status).toBe(200);
  });

  it('413 for a body over --report-limit (RFC 9110 §15.5.14), stating the limit', async () => {
    const auth = { authorization: `Bearer ${TOKEN}` };
    const over = await post(guarded.http, '', midiFile('quote.mid'), { 'content-type': 'audio/midi', ...auth });
    expect(over.status).toBe(413);
    expect(over.json).toEqual({ error: `the request body is over the limit of ${SMALL_LIMIT} bytes; earwitness listen --report-limit BYTES sets it`, limit: SMALL_LIMIT });
    const form = new FormData();
    form.append('a', midiFile('fresh.mid'), 'fresh.mid');
    form.append('b', midiFile('cadence.mid'), 'cadence.mid');
    expect((await post(guarded.http, '', form, auth)).status).toBe(413);
  });

  it('413 as soon as a streamed body passes the limit: the daemon answers a body that has not ended', async () => {
    // 1 MiB is sent, and then the body stalls, never ending: a daemon that read to the end before answering would never answer.
    const before = 1 << 20;
    let sent = 0;
    const body = new Readable({
      read() {
        if (sent >= before) return;
        sent += 64 << 10;
        this.push(Buffer.alloc(64 << 10, 0x4d));
      },
    });
    const answer = await new Promise<{ status: number; text: string }>((resolve, reject) => {
      // No Content-Length: chunked transfer coding (RFC 9112 §7.1), so the size is known only by counting.
      const req = request({ host: '127.0.0.1', port: guarded.http, path: `/report?token=${TOKEN}`, method: 'POST', headers: { 'content-type': 'audio/midi' } }, (res) => {
        let text = '';
        res.on('data', (d: Buffer) => (text += d.toString()));
        res.on('end', () => {
          resolve({ status: res.statusCode!, text });
          req.destroy();
        });
      });
      req.on('error', reject);
      body.pipe(req);
    });
    body.destroy();
    expect(answer.status).toBe(413);
    expect(JSON.parse(answer.text).limit).toBe(SMALL_LIMIT);
  }, 30_000);

  it('413 at once for a declared Content-Length over the limit', async () => {
    const status = await new Promise<number>((resolve, reject) => {
      const req = request({ host: '127.0.0.1', port: guarded.http, path: `/report?token=${TOKEN}`, method: 'POST', headers: { 'content-type': 'audio/midi', 'content-length': String(1 << 30) } }, (res) => {
        res.resume();
        resolve(res.statusCode!);
      });
      req.on('error', reject);
      req.flushHeaders();
    });
    expect(status).toBe(413);
  });
});
