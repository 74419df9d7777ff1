/**
 * The MIDI reader on hostile bytes (fast-check, 10,000 inputs a property):
 * random bytes, valid files with bytes set, inserted, deleted and cut, and
 * well-framed files (an SMF 1.0 header, chunk lengths right) whose track
 * data are random event-like bytes. Every input either reads, giving notes
 * a corpus can hold, or is refused with a MidiFileError naming the file —
 * never another exception, never a hang (each input is timed).
 *
 * Two inputs are pinned: a variable-length number of 5 bytes (SMF 1.0
 * allows 4), which the parser underneath decodes as a negative length and
 * so reads the same bytes forever, and a million note events in one track,
 * which it pairs in quadratic time; both are refused at once now.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { MAX_TRACK_NOTE_EVENTS, MidiFileError, parseMidi } from '../../../bridge/formats/midi-file.js';
import { ROOT } from '../../helpers/daemon.js';
import { chunk, header, manyNotes } from '../../helpers/damaged-midi.js';

const RUNS = 10_000;
/** Generous: the slowest valid input here reads in a few ms; a hang is what this catches. */
const SLOWEST_MS = 5_000;

const seeds: Uint8Array[] = [
  ...readdirSync(join(ROOT, 'test', 'fixtures', 'midi')).filter((f) => f.endsWith('.mid')).map((f) => join(ROOT, 'test', 'fixtures', 'midi', f)),
  ...readdirSync(join(ROOT, 'presets', 'demo', 'corpus')).map((f) => join(ROOT, 'presets', 'demo', 'corpus', f)),
].map((f) => new Uint8Array(readFileSync(f)));

/** Bytes that mean something in SMF 1.0 and MIDI 1.0 (status bytes, meta types, VLQ continuation), mixed with any byte. */
const smfByte = fc.oneof(fc.constantFrom(0x00, 0x01, 0x03, 0x2f, 0x51, 0x58, 0x59, 0x7f, 0x80, 0x81, 0x90, 0x9f, 0xb0, 0xc0, 0xe0, 0xf0, 0xf7, 0xff), fc.integer({ min: 0, max: 255 }));

const mutation = fc.oneof(
  fc.record({ kind: fc.constant('set' as const), at: fc.nat(), byte: smfByte }),
  fc.record({ kind: fc.constant('insert' as const), at: fc.nat(), bytes: fc.uint8Array({ maxLength: 12 }) }),
  fc.record({ kind: fc.constant('delete' as const), at: fc.nat(), length: fc.integer({ min: 1, max: 12 }) }),
  fc.record({ kind: fc.constant('cut' as const), at: fc.nat() }),
);
type Mutation = typeof mutation extends fc.Arbitrary<infer M> ? M : never;

function mutate(seed: Uint8Array, mutations: Mutation[]): Uint8Array {
  let bytes = Array.from(seed);
  for (const m of mutations) {
    const at = bytes.length ? m.at % bytes.length : 0;
    if (m.kind === 'set' && bytes.length) bytes[at] = m.byte;
    else if (m.kind === 'insert') bytes.splice(at, 0, ...m.bytes);
    else if (m.kind === 'delete') bytes.splice(at, m.length);
    else if (m.kind === 'cut') bytes = bytes.slice(0, at);
  }
  return Uint8Array.from(bytes);
}

const wellFramed = fc
  .record({
    format: fc.integer({ min: 0, max: 2 }),
    announced: fc.integer({ min: 0, max: 5 }),
    ppq: fc.oneof(fc.constantFrom(1, 96, 480, 960, 0x7fff), fc.integer({ min: 1, max: 0x7fff })),
    tracks: fc.array(fc.array(smfByte, { maxLength: 200 }), { minLength: 1, maxLength: 4 }),
  })
  .map(({ format, announced, ppq, tracks }) => Uint8Array.from([...header(format, announced, ppq), ...tracks.flatMap((t) => [...chunk('MTrk', t)])]));

interface Tally {
  read: number;
  refused: Record<string, number>;
  slowestMs: number;
}

/** Reads each input; anything but a piece or a MidiFileError fails the property. */
function reader(tally: Tally) {
  return (bytes: Uint8Array): void => {
    const t0 = performance.now();
    try {
      const piece = parseMidi(bytes, 'fuzz.mid');
      for (const n of piece.notes) {
        expect(Number.isFinite(n.onset) && n.onset >= 0 && Number.isFinite(n.duration) && n.duration >= 0).toBe(true);
        expect(Number.isInteger(n.pitch) && n.pitch >= 0 && n.pitch <= 127).toBe(true);
      }
      expect(Number.isFinite(piece.beats)).toBe(true);
      tally.read++;
    } catch (e) {
      if (!(e instanceof MidiFileError)) throw e;
      expect(e.file).toBe('fuzz.mid');
      const kind = /^[a-z ]+/i.exec(e.reason)![0].trim();
      tally.refused[kind] = (tally.refused[kind] ?? 0) + 1;
    }
    const ms = performance.now() - t0;
    tally.slowestMs = Math.max(tally.slowestMs, ms);
    expect(ms).toBeLessThan(SLOWEST_MS);
  };
}

const report = (name: string, t: Tally): void => {
  console.log(`midi fuzz ${name}: ${RUNS} inputs, ${t.read} read, refused ${JSON.stringify(t.refused)}, slowest ${t.slowestMs.toFixed(1)} ms`);
};

describe('parseMidi on hostile bytes', () => {
  it('hangs on nothing it used to: a 5-byte variable-length number, and a million note events', () => {
    // SMF 1.0: a VLQ has at most 4 bytes. 8F FF FF FF 79 is what the parser underneath decodes as −7: the sysex's length sends it back to the event's start.
    const loops = Uint8Array.from([...header(0, 1, 480), ...chunk('MTrk', [0x00, 0xf0, 0x8f, 0xff, 0xff, 0xff, 0x79, 0x00, 0xff, 0x2f, 0x00])]);
    expect(() => parseMidi(loops, 'loops.mid')).toThrow(/loops.mid: damaged MIDI data \(track 1 of 1: the variable-length number at byte 24 runs past the 4 bytes SMF 1.0 allows\)/);
    const million = manyNotes(500_000);
    const t0 = performance.now();
    expect(() => parseMidi(million, 'million.mid')).toThrow(new RegExp(`million.mid: track 1 of 1 holds more than ${MAX_TRACK_NOTE_EVENTS.toLocaleString('en')} note events`));
    expect(performance.now() - t0).toBeLessThan(SLOWEST_MS);
    // At the limit the track still reads, all of it.
    expect(parseMidi(manyNotes(MAX_TRACK_NOTE_EVENTS / 2), 'limit.mid').notes).toHaveLength(MAX_TRACK_NOTE_EVENTS / 2);
  });

  it('refuses a note whose number or velocity byte is 128 or more, naming the byte: MIDI 1.0 data bytes are 0 to 127', () => {
    // The Note On's status byte is byte 23: after the 14-byte header, the 8-byte track head and its delta time.
    const note = (bytes: number[]) => Uint8Array.from([...header(0, 1, 480), ...chunk('MTrk', [0x00, ...bytes, 0x00, 0xff, 0x2f, 0x00])]);
    expect(parseMidi(note([0x90, 0x3c, 0x40, 0x60, 0x3c, 0x00]), 'fine.mid').notes).toHaveLength(1);
    expect(() => parseMidi(note([0x90, 0x81, 0x40]), 'pitch.mid')).toThrow('pitch.mid: damaged MIDI data (track 1 of 1: byte 24 is 0x81, where the event at byte 23 needs a data byte (0 to 127, MIDI 1.0))');
    expect(() => parseMidi(note([0x90, 0x3c, 0xc0]), 'velocity.mid')).toThrow('velocity.mid: damaged MIDI data (track 1 of 1: byte 25 is 0xc0, where the event at byte 23 needs a data byte (0 to 127, MIDI 1.0))');
    expect(() => parseMidi(note([0x90, 0x3c, 0x40, 0x00, 0x3c, 0x90]), 'running.mid')).toThrow('running.mid: damaged MIDI data (track 1 of 1: byte 28 is 0x90, where the event at byte 27 needs a data byte (0 to 127, MIDI 1.0))');
  });

  it(`random bytes (${RUNS})`, () => {
    const tally: Tally = { read: 0, refused: {}, slowestMs: 0 };
    // Half start with "MThd", so more than the first check is reached.
    const bytes = fc.oneof(fc.uint8Array({ maxLength: 300 }), fc.uint8Array({ maxLength: 300 }).map((b) => Uint8Array.from([0x4d, 0x54, 0x68, 0x64, ...b])));
    fc.assert(fc.property(bytes, reader(tally)), { numRuns: RUNS });
    report('random', tally);
    expect(tally.read + Object.values(tally.refused).reduce((s, n) => s + n, 0)).toBe(RUNS);
  });

  it(`valid files, mutated (${RUNS})`, () => {
    const tally: Tally = { read: 0, refused: {}, slowestMs: 0 };
    const input = fc.tuple(fc.integer({ min: 0, max: seeds.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 6 })).map(([s, ms]) => mutate(seeds[s], ms));
    fc.assert(fc.property(input, reader(tally)), { numRuns: RUNS });
    report('mutated', tally);
    // Both outcomes occur: a mutated note byte still reads, a broken frame is refused.
    expect(tally.read).toBeGreaterThan(0);
    expect(Object.keys(tally.refused).length).toBeGreaterThan(0);
  });

  it(`well-framed files of random events (${RUNS})`, () => {
    const tally: Tally = { read: 0, refused: {}, slowestMs: 0 };
    fc.assert(fc.property(wellFramed, reader(tally)), { numRuns: RUNS });
    report('well-framed', tally);
    expect(tally.read).toBeGreaterThan(0);
  });
});
