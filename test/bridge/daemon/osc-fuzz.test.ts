/**
 * The OSC handler on hostile packets (fast-check, 10,000 inputs a
 * property): the daemon's own packet reader (bridge/daemon/osc-input.ts
 * `oscReader`, what the UDP socket calls) feeding a whole daemon in this
 * process — clock, held notes, the scoring worker (from dist/), the warning
 * policy, the session log. Packets are random bytes, OSC 1.0 messages and
 * nested bundles with random addresses, type tags, values and time tags
 * (written by the `osc` package), and such packets with bytes changed.
 * Nothing may throw, now or when a bundle's time tag comes due; every packet
 * is either heard or counted as bad input; and the daemon still scores a
 * good note afterwards, and logs every note it heard.
 */
import { join } from 'node:path';
import fc from 'fast-check';
import osc, { type OscBundle, type OscMessage } from 'osc';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Daemon, startDaemon } from '../../../bridge/daemon/daemon.js';
import type { BadInput, InputCommand } from '../../../bridge/daemon/input.js';
import { OSC_ADDRESSES } from '../../../bridge/daemon/osc-messages.js';
import { type OscReader, oscReader } from '../../../bridge/daemon/osc-input.js';
import type { ScoreEvent } from '../../../contract/events.js';
import { loadPreset } from '../../../bridge/formats/presets.js';
import { SessionLog } from '../../../bridge/formats/session-log.js';
import { WORKER_URL, tempDir, writeCorpus } from '../../helpers/daemon.js';

const RUNS = 10_000;

/** Values at and past every limit the address space checks (osc-messages.ts), in every numeric type. */
const EDGES = [0, 1, -1, 0.5, 1.5, 16, 17, 19.9, 60, 127, 128, 400, 1000, 1024, 1025, 500_000, 500_001, 2 ** 31 - 1, -(2 ** 31), 1e9, Number.NaN, Infinity, -Infinity];
const arg = fc.oneof(
  fc.constantFrom(...EDGES).chain((v) => fc.constantFrom({ type: 'i', value: Number.isFinite(v) ? v | 0 : 0 }, { type: 'f', value: v }, { type: 'd', value: v })),
  fc.integer({ min: -(2 ** 31), max: 2 ** 31 - 1 }).map((value) => ({ type: 'i', value })),
  fc.double().map((value) => ({ type: 'f', value })),
  fc.double().map((value) => ({ type: 'd', value })),
  fc.string({ maxLength: 24 }).map((value) => ({ type: 's', value })),
  fc.uint8Array({ maxLength: 16 }).map((value) => ({ type: 'b', value })),
  fc.constantFrom({ type: 'T', value: true }, { type: 'F', value: false }, { type: 'N', value: null }, { type: 'I', value: Infinity }),
);
const address = fc.oneof(fc.constantFrom(...OSC_ADDRESSES), fc.constantFrom('/', '/ew', '/ew/', '/ew/note/', '/EW/NOTE', '/__proto__', '/constructor'), fc.string({ maxLength: 24 }).map((s) => `/${s}`));
/** Mostly in range (MIDI's 0–127, a few beats), so many packets are heard and go on to the clock, the scorer and the log. */
const plausible = fc.oneof(fc.integer({ min: 0, max: 127 }).map((value) => ({ type: 'i', value })), fc.double({ min: 0, max: 64, noNaN: true }).map((value) => ({ type: 'f', value })), arg);
const message: fc.Arbitrary<OscMessage> = fc.oneof(
  { arbitrary: fc.record({ address: fc.constantFrom(...OSC_ADDRESSES), args: fc.array(plausible, { maxLength: 6 }) }), weight: 3 },
  { arbitrary: fc.record({ address, args: fc.array(arg, { maxLength: 6 }) }), weight: 1 },
);
const timeTag = fc.oneof(
  fc.constant({ raw: [0, 1] as [number, number] }),
  fc.double({ min: -5, max: 70, noNaN: true }).map((s) => osc.timeTag(s)),
  fc.double({ min: 0, max: 0.3, noNaN: true }).map((s) => osc.timeTag(s)), // due during the run
  fc.tuple(fc.nat(2 ** 32 - 1), fc.nat(2 ** 32 - 1)).map((raw) => ({ raw })),
);
const { packet } = fc.letrec<{ packet: OscMessage | OscBundle; bundle: OscBundle }>((tie) => ({
  packet: fc.oneof({ depthSize: 'small', withCrossShrink: true }, message, tie('bundle')),
  bundle: fc.record({ timeTag, packets: fc.array(tie('packet'), { maxLength: 4 }) }) as fc.Arbitrary<OscBundle>,
}));

/** OSC 1.0 bytes of a packet, or null for the few the encoder itself refuses (those never reach a socket). */
function encode(p: OscMessage | OscBundle): Uint8Array | null {
  try {
    return osc.writePacket(p, { metadata: true });
  } catch {
    return null;
  }
}

const encoded = packet.map(encode).filter((b): b is Uint8Array => b !== null);
const mutated = fc.tuple(encoded, fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 255 })), { minLength: 1, maxLength: 4 }), fc.nat()).map(([bytes, sets, cut]) => {
  const b = Uint8Array.from(bytes);
  for (const [at, v] of sets) b[at % b.length] = v;
  return cut % 3 === 0 ? b.subarray(0, cut % (b.length + 1)) : b;
});
const raw = fc.oneof(fc.uint8Array({ maxLength: 200 }), fc.uint8Array({ maxLength: 200 }).map((b) => Uint8Array.from([...Buffer.from('#bundle\0'), ...b])), mutated);

describe('the OSC handler on hostile packets, through a whole daemon', () => {
  let daemon: Daemon;
  let reader: OscReader;
  const heard: Record<string, number> = {};
  const bad: Record<string, number> = {};
  const events: ScoreEvent[] = [];
  let log: string;
  beforeAll(async () => {
    log = join(tempDir('osc-fuzz'), 'sessions.db');
    daemon = await startDaemon({
      corpus: writeCorpus().dir, preset: loadPreset('livecode'), oscPort: 0, httpPort: 0, oscOut: null,
      midi: { input: null, thru: null, channels: null }, log, workerUrl: WORKER_URL, notice: () => {},
    });
    daemon.onEvent((e) => e.type === 'score' && events.push(e));
    reader = oscReader({
      onCommand: (c: InputCommand, atMs: number) => {
        heard[c.kind] = (heard[c.kind] ?? 0) + 1;
        daemon.handle(c, atMs);
      },
      onBad: (b: BadInput) => void (bad[b.kind] = (bad[b.kind] ?? 0) + 1),
    });
  });
  afterAll(async () => {
    reader?.clear();
    await daemon?.stop();
  });

  const total = (counts: Record<string, number>): number => Object.values(counts).reduce((s, n) => s + n, 0);

  it(`OSC 1.0 messages and bundles of random addresses, types, values and time tags (${RUNS})`, async () => {
    let packets = 0;
    // A turn of the event loop after each packet, so verdicts, warnings and due bundles interleave with input as on stage.
    const tick = (): Promise<void> => new Promise((r) => setImmediate(r));
    await fc.assert(fc.asyncProperty(encoded, async (bytes) => {
      reader.read(bytes, 'fuzz');
      packets++;
      await tick();
    }), { numRuns: RUNS });
    console.log(`osc fuzz structured: ${packets} packets; heard ${JSON.stringify(heard)}; bad ${JSON.stringify(bad)}; scheduled ${reader.scheduled()}`);
    expect(packets).toBe(RUNS);
    expect(total(heard)).toBeGreaterThan(0);
    expect(total(bad)).toBeGreaterThan(0);
  });

  it(`random bytes and changed packets (${RUNS})`, () => {
    const before = total(heard) + total(bad);
    fc.assert(fc.property(raw, (bytes) => reader.read(bytes, 'fuzz')), { numRuns: RUNS });
    console.log(`osc fuzz raw: ${RUNS} packets; heard + bad grew by ${total(heard) + total(bad) - before}; bad ${JSON.stringify(bad)}`);
    // Every packet is heard or counted: a message at least once, an empty bundle not at all.
    expect(total(heard) + total(bad) - before).toBeGreaterThan(RUNS / 2);
  });

  it('then plays out what was scheduled, still scores a good note, and logs every note it heard', async () => {
    await new Promise((r) => setTimeout(r, 500)); // bundles due within 0.3 s have played
    reader.clear();
    const h = daemon.health();
    expect(h.ok).toBe(true);
    const seq = (h.notes as number) + 1;
    const scored = new Promise<ScoreEvent>((resolve) => daemon.onEvent((e) => e.type === 'score' && e.seq === seq && resolve(e)));
    reader.read(osc.writePacket({ address: '/ew/reset', args: [] }, { metadata: true }), 'test');
    reader.read(osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: 60 }, { type: 'i', value: 90 }, { type: 'f', value: 1 }] }, { metadata: true }), 'test');
    expect((await scored).windowNotes).toBe(1);
    await daemon.stop(); // closes held notes: each is logged whole
    const opened = SessionLog.open(log, { readonly: true });
    const s = opened.session('latest')!;
    opened.close();
    expect(s.notes.length).toBe(seq);
    expect(s.notes.map((n) => n.seq)).toEqual(Array.from({ length: seq }, (_, k) => k + 1));
    console.log(`osc fuzz: ${seq} notes heard and logged, ${events.length} evaluations`);
  });
});
