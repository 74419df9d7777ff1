/**
 * What the daemon does with what clients send on /events (fast-check,
 * 10,000 inputs): a raw TCP client opens the socket with an RFC 6455
 * handshake, then sends random frames — masked or not (§5.3: a client must
 * mask), any opcode including reserved ones and control frames, RSV bits
 * set, lengths in all three encodings (§5.2) up past the 4 KiB limit,
 * fragments, or plain garbage. The daemon (`node dist/bridge/cli.js
 * listen`) ignores what a client says and closes on what breaks the
 * protocol; afterwards it is still running, has let every client go, and
 * a page connecting now gets its hello.
 */
import { createHash, randomBytes } from 'node:crypto';
import { type Socket, connect } from 'node:net';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MAX_CLIENT_MESSAGE } from '../../../bridge/daemon/web-server.js';
import { type SpawnedDaemon, eventually, health, listen, spawnDaemon, writeCorpus } from '../../helpers/daemon.js';

const RUNS = 10_000;
const BATCH = 16;

/** RFC 6455 §5.2: FIN, RSV1–3, opcode; MASK and a 7-bit, 16-bit or 64-bit length; the masking key; the payload, masked. */
interface Frame {
  fin: boolean;
  rsv: number;
  opcode: number;
  masked: boolean;
  payload: Uint8Array;
  /** Which length encoding to use even when a shorter one would do (7, 16 or 64 bits). */
  encoding: 7 | 16 | 64;
}

function frameBytes(f: Frame): Buffer {
  const n = f.payload.length;
  const bits = n > 0xffff ? 64 : n > 125 ? Math.max(16, f.encoding) : f.encoding;
  const head = [(f.fin ? 0x80 : 0) | (f.rsv << 4) | f.opcode];
  const mask = f.masked ? 0x80 : 0;
  if (bits === 7) head.push(mask | n);
  else if (bits === 16) head.push(mask | 126, n >> 8, n & 0xff);
  else head.push(mask | 127, 0, 0, 0, 0, (n >>> 24) & 0xff, (n >>> 16) & 0xff, (n >>> 8) & 0xff, n & 0xff);
  const key = f.masked ? randomBytes(4) : Buffer.alloc(0);
  const body = Buffer.from(f.payload);
  if (f.masked) for (let i = 0; i < body.length; i++) body[i] ^= key[i & 3];
  return Buffer.concat([Buffer.from(head), key, body]);
}

const payload = fc.oneof(
  { arbitrary: fc.uint8Array({ maxLength: 200 }), weight: 6 },
  { arbitrary: fc.string({ maxLength: 200 }).map((s) => new Uint8Array(Buffer.from(s))), weight: 3 },
  { arbitrary: fc.constantFrom('{"type":"hello"}', '{"__proto__":{"x":1}}', 'process.exit(1)', '{"type":"reset"}').map((s) => new Uint8Array(Buffer.from(s))), weight: 2 },
  { arbitrary: fc.integer({ min: MAX_CLIENT_MESSAGE - 2, max: MAX_CLIENT_MESSAGE * 2 }).map((n) => new Uint8Array(n)), weight: 1 },
);
const frame: fc.Arbitrary<Frame> = fc.record({
  fin: fc.oneof({ arbitrary: fc.constant(true), weight: 4 }, { arbitrary: fc.constant(false), weight: 1 }),
  rsv: fc.oneof({ arbitrary: fc.constant(0), weight: 6 }, { arbitrary: fc.integer({ min: 1, max: 7 }), weight: 1 }),
  opcode: fc.oneof({ arbitrary: fc.constantFrom(0x1, 0x2), weight: 6 }, { arbitrary: fc.integer({ min: 0, max: 15 }), weight: 3 }),
  masked: fc.oneof({ arbitrary: fc.constant(true), weight: 6 }, { arbitrary: fc.constant(false), weight: 1 }),
  payload,
  encoding: fc.constantFrom(7 as const, 16 as const, 64 as const),
});
/** One client's whole say: frames, or garbage where frames belong. */
const say = fc.oneof(
  { arbitrary: fc.array(frame, { minLength: 1, maxLength: 3 }).map((fs) => Buffer.concat(fs.map(frameBytes))), weight: 5 },
  { arbitrary: fc.uint8Array({ minLength: 1, maxLength: 64 }).map((b) => Buffer.from(b)), weight: 1 },
);

interface Outcome {
  /** 101, or the status the handshake got. */
  status: number;
  /** The code of the server's close frame (RFC 6455 §7.4: 1002 protocol error, 1007 bad UTF-8, 1009 too big), or 0 for none. */
  closeCode: number;
}

/** The close code in the server's frames (unmasked, §5.1), 0 when there is no close frame. */
function closeCode(frames: Buffer): number {
  for (let at = 0; at + 2 <= frames.length; ) {
    const opcode = frames[at] & 0x0f;
    let n = frames[at + 1] & 0x7f;
    let start = at + 2;
    if (n === 126) [n, start] = [frames.readUInt16BE(at + 2), at + 4];
    else if (n === 127) [n, start] = [Number(frames.readBigUInt64BE(at + 2)), at + 10];
    if (opcode === 0x8) return start + 2 <= frames.length ? frames.readUInt16BE(start) : 1005;
    at = start + n;
  }
  return 0;
}

/** Opens /events by hand, sends `bytes`, then ends its side; resolves once the socket is closed. */
function client(port: number, bytes: Buffer): Promise<Outcome> {
  return new Promise((resolve) => {
    const key = randomBytes(16).toString('base64');
    const accept = createHash('sha1').update(`${key}258EAFA5-E914-47DA-95CA-C5AB0DC85B11`).digest('base64');
    const socket: Socket = connect(port, '127.0.0.1');
    let status = 0;
    let got = Buffer.alloc(0);
    let framesFrom = 0;
    const timer = setTimeout(() => socket.destroy(), 5000);
    socket.on('error', () => {});
    socket.on('close', () => (clearTimeout(timer), resolve({ status, closeCode: status === 101 ? closeCode(got.subarray(framesFrom)) : 0 })));
    socket.on('data', (d: Buffer) => {
      got = Buffer.concat([got, d]);
      if (status) return;
      const end = got.indexOf('\r\n\r\n');
      if (end < 0) return;
      const head = got.subarray(0, end).toString('latin1');
      status = Number(/^HTTP\/1\.1 (\d+)/.exec(head)?.[1] ?? -1);
      framesFrom = end + 4;
      if (status !== 101) return;
      expect(head).toContain(`Sec-WebSocket-Accept: ${accept}`);
      // Give the server a moment to answer what it was sent before this side ends.
      socket.write(bytes, () => setTimeout(() => socket.end(), 5));
    });
    socket.write(`GET /events HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nUpgrade: websocket\r\nConnection: Upgrade\r\nSec-WebSocket-Key: ${key}\r\nSec-WebSocket-Version: 13\r\n\r\n`);
  });
}

describe('/events on random client frames', () => {
  let d: SpawnedDaemon;
  beforeAll(async () => {
    d = await spawnDaemon(['--corpus', writeCorpus().dir, '--preset', 'livecode']);
  });
  afterAll(async () => {
    await d?.stop();
  });

  it(`${RUNS} clients, each with random frames: the daemon carries on and lets every one go`, async () => {
    const statuses: Record<number, number> = {};
    const closes: Record<number, number> = {};
    let runs = 0;
    await fc.assert(
      fc.asyncProperty(fc.array(say, { minLength: BATCH, maxLength: BATCH }), async (batch) => {
        const outcomes = await Promise.all(batch.map((bytes) => client(d.http, bytes)));
        for (const o of outcomes) {
          statuses[o.status] = (statuses[o.status] ?? 0) + 1;
          closes[o.closeCode] = (closes[o.closeCode] ?? 0) + 1;
        }
        runs += batch.length;
        expect(d.child.exitCode).toBeNull();
      }),
      { numRuns: RUNS / BATCH },
    );
    console.log(`ws fuzz: ${runs} clients, handshakes ${JSON.stringify(statuses)}, server close codes ${JSON.stringify(closes)} (0 = none: the client's say was ignored)`);
    // The protocol is enforced: broken frames are closed with 1002, oversized ones with 1009 (RFC 6455 §7.4.1).
    expect(closes[1002]).toBeGreaterThan(0);
    expect(closes[1009]).toBeGreaterThan(0);
    expect(runs).toBe(RUNS);
    expect(statuses[101]).toBeGreaterThan(RUNS * 0.9); // a few may meet the 32-client cap while others are still closing
    const h = await eventually(() => health(d.http), (v) => v.clients === 0);
    expect(h.ok).toBe(true);
    expect(h.clients).toBe(0);
    const page = await listen(d.http);
    expect((await page.next((e) => e.type === 'hello')).type).toBe('hello');
    page.close();
    expect(d.stderr()).not.toMatch(/\n\s+at /); // no stack trace
  });
});
