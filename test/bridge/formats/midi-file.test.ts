/**
 * MIDI import (bridge/formats/midi-file.ts) checked against two outside readers of
 * the same bytes: Debian's `midicsv` and the npm parser `midi-file`. The
 * fixtures are written byte by byte by test/fixtures/midi/make.mjs.
 *
 * @example
 *   npx vitest run test/bridge/formats/midi-file.test.ts
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import midiFile from 'midi-file';
import { afterAll, describe, expect, it } from 'vitest';
import { MidiFileError, parseMidi, readMidi } from '../../../bridge/formats/midi-file.js';
import { spell, keyFromSignature } from '../../../core/spelling.js';
import { vlq } from '../../helpers/smf.mjs';
import { tool } from '../../helpers/which.js';

const FIXTURES = join(import.meta.dirname, '../../fixtures/midi');
const fixture = (name: string): string => join(FIXTURES, name);
const FILES = ['format0-ppq96.mid', 'format1-ppq480.mid', 'format1-ppq960.mid'] as const;
const PERCUSSION = 10;

/** What the fixtures hold, counted from make.mjs: melodic notes and drum notes. */
const EXPECTED_COUNTS: Record<(typeof FILES)[number], { pitched: number; drums: number }> = {
  'format0-ppq96.mid': { pitched: 16, drums: 8 },
  'format1-ppq480.mid': { pitched: 24, drums: 8 },
  'format1-ppq960.mid': { pitched: 16, drums: 4 },
};

interface RefNote {
  tick: number;
  ticks: number;
  pitch: number;
  /** 1–16. */
  channel: number;
}

interface RefEvent {
  tick: number;
  on: boolean;
  /** 0–15, as on the wire. */
  channel: number;
  pitch: number;
}

interface Reference {
  ppq: number;
  notes: RefNote[];
  /** [tick, microseconds per quarter note]. */
  tempos: [number, number][];
  keys: { sf: number; minor: boolean }[];
}

/** MIDI 1.0: a Note On with velocity 0 is a Note Off; each off ends the earliest open note of its channel and key. */
function pairNotes(events: readonly RefEvent[]): RefNote[] {
  const open = new Map<string, number[]>();
  const notes: RefNote[] = [];
  for (const e of events) {
    const k = `${e.channel}:${e.pitch}`;
    if (e.on) open.set(k, [...(open.get(k) ?? []), e.tick]);
    else {
      const started = open.get(k)?.shift();
      if (started !== undefined) notes.push({ tick: started, ticks: e.tick - started, pitch: e.pitch, channel: e.channel + 1 });
    }
  }
  return sortNotes(notes);
}

const sortNotes = (notes: RefNote[]): RefNote[] => notes.sort((a, b) => a.tick - b.tick || a.pitch - b.pitch || a.channel - b.channel);

/** midicsv's CSV (midicsv(1)): `track, time, type, …`, Note_on_c/Note_off_c as `channel, note, velocity`. */
function fromMidicsv(csv: string): Reference {
  const ref: Reference = { ppq: 0, notes: [], tempos: [], keys: [] };
  const events: RefEvent[][] = [];
  for (const line of csv.split('\n')) {
    const [track, time, type, ...rest] = line.split(', ');
    const tick = Number(time);
    if (type === 'Header') ref.ppq = Number(rest[2]);
    else if (type === 'Tempo') ref.tempos.push([tick, Number(rest[0])]);
    else if (type === 'Key_signature') ref.keys.push({ sf: Number(rest[0]), minor: rest[1] === '"minor"' });
    else if (type === 'Note_on_c' || type === 'Note_off_c') {
      const [channel, pitch, velocity] = rest.map(Number);
      (events[Number(track)] ??= []).push({ tick, channel, pitch, on: type === 'Note_on_c' && velocity > 0 });
    }
  }
  ref.notes = sortNotes(events.flatMap((e) => (e ? pairNotes(e) : [])));
  return ref;
}

/** The npm `midi-file` parser: events with delta times; it reports Note On velocity 0 as `noteOff`. */
function fromMidiFile(bytes: Uint8Array): Reference & { running: number } {
  const parsed = midiFile.parseMidi(bytes);
  const ref = { ppq: parsed.header.ticksPerBeat ?? 0, notes: [] as RefNote[], tempos: [] as [number, number][], keys: [] as Reference['keys'], running: 0 };
  for (const track of parsed.tracks) {
    let tick = 0;
    const events: RefEvent[] = [];
    for (const e of track) {
      tick += e.deltaTime;
      if ((e as { running?: boolean }).running) ref.running++;
      if (e.type === 'setTempo') ref.tempos.push([tick, e.microsecondsPerBeat]);
      else if (e.type === 'keySignature') ref.keys.push({ sf: e.key, minor: e.scale === 1 });
      else if (e.type === 'noteOn' || e.type === 'noteOff') events.push({ tick, channel: e.channel, pitch: e.noteNumber, on: e.type === 'noteOn' });
    }
    ref.notes.push(...pairNotes(events));
  }
  sortNotes(ref.notes);
  return ref;
}

/** readMidi's notes in the references' terms: onset and duration back in ticks. */
function ours(file: string, percussion: boolean): RefNote[] {
  const m = readMidi(file, { percussion });
  return sortNotes(m.notes.map((n) => ({ tick: n.onset * m.ppq, ticks: n.duration * m.ppq, pitch: n.pitch, channel: n.channel })));
}

/** SMF 1.0: tempo is 500,000 µs a quarter note (120 BPM) until the first Set Tempo event. */
function secondsAt(beat: number, ppq: number, tempos: readonly [number, number][]): number {
  let seconds = 0;
  let from = 0;
  let us = 500_000;
  for (const [tick, next] of [...tempos].sort((a, b) => a[0] - b[0])) {
    const at = tick / ppq;
    if (at >= beat) break;
    seconds += ((at - from) * us) / 1e6;
    from = at;
    us = next;
  }
  return seconds + ((beat - from) * us) / 1e6;
}

function checkAgainst(name: (typeof FILES)[number], ref: Reference): void {
  const file = fixture(name);
  const m = readMidi(file);
  expect(m.ppq).toBe(ref.ppq);
  // Percussion left out by default (General MIDI 1: channel 10 is drums), kept when asked.
  const pitched = ref.notes.filter((n) => n.channel !== PERCUSSION);
  expect(pitched).toHaveLength(EXPECTED_COUNTS[name].pitched);
  expect(ref.notes.length - pitched.length).toBe(EXPECTED_COUNTS[name].drums);
  expect(ours(file, false)).toEqual(pitched);
  expect(ours(file, true)).toEqual(ref.notes);
  // Ontimes in beats are ticks / ppq.
  expect(m.notes.map((n) => n.onset)).toEqual(pitched.map((n) => n.tick / ref.ppq));
  // Tempo map: seconds at every note's ontime, from the reference's tempo events.
  for (const n of m.notes) expect(m.tempo.toSeconds(n.onset)).toBeCloseTo(secondsAt(n.onset, ref.ppq, ref.tempos), 9);
  // SMF 1.0 FF 59: sf (sharps positive) and mi decide the key when present.
  if (ref.keys.length) {
    expect(m.keyFromFile).toBe(true);
    expect(m.key).toEqual(keyFromSignature(ref.keys[0].sf, ref.keys[0].minor));
  } else expect(m.keyFromFile).toBe(false);
}

describe('the fixture writer (test/helpers/smf.mjs)', () => {
  it("writes variable-length quantities as SMF 1.0's own table of examples (from memory)", () => {
    const table: [number, number[]][] = [
      [0x00, [0x00]], [0x40, [0x40]], [0x7f, [0x7f]], [0x80, [0x81, 0x00]], [0x2000, [0xc0, 0x00]], [0x3fff, [0xff, 0x7f]],
      [0x4000, [0x81, 0x80, 0x00]], [0x100000, [0xc0, 0x80, 0x00]], [0x1fffff, [0xff, 0xff, 0x7f]],
      [0x200000, [0x81, 0x80, 0x80, 0x00]], [0x8000000, [0xc0, 0x80, 0x80, 0x00]], [0xfffffff, [0xff, 0xff, 0xff, 0x7f]],
    ];
    for (const [n, bytes] of table) expect(vlq(n), `0x${n.toString(16)}`).toEqual(bytes);
  });
});

describe('MIDI import against the npm parser midi-file', () => {
  for (const name of FILES) {
    it(`${name}: same notes, ontimes, pitches, channels, tempo and key`, () => {
      const ref = fromMidiFile(readFileSync(fixture(name)));
      checkAgainst(name, ref);
    });
  }

  it('the fixtures exercise running status (midi-file marks events that reuse the last status)', () => {
    for (const name of FILES) expect(fromMidiFile(readFileSync(fixture(name))).running, name).toBeGreaterThan(0);
  });
});

const midicsv = tool('midicsv', 'midicsv');

describe.skipIf(!midicsv.path)(`MIDI import against Debian's ${midicsv.label}`, () => {
  for (const name of FILES) {
    it(`${name}: same notes, ontimes, pitches, channels, tempo and key`, () => {
      const csv = execFileSync(midicsv.path!, [fixture(name)], { encoding: 'utf8' });
      checkAgainst(name, fromMidicsv(csv));
    });
  }
});

describe('MIDI import: what the fixtures say, worked by hand', () => {
  it('format 0: B♭ major from the key signature spells E♭5 (MIDI 75) as morphetic 69 (C4 = 60, one step a letter)', () => {
    const m = readMidi(fixture('format0-ppq96.mid'));
    expect(m.key).toMatchObject({ tonic: 'Bb', mode: 'major', fifths: -2 });
    expect(m.notes.find((n) => n.pitch === 75)?.morph).toBe(69);
    expect(spell(75, m.key).name).toBe('Eb5');
  });

  it('format 0: the tempo change (100 then 75 BPM at beat 6) gives 6 × 0.6 s + 2 × 0.8 s = 5.2 s at beat 8', () => {
    const m = readMidi(fixture('format0-ppq96.mid'));
    expect(m.tempo.toSeconds(8)).toBeCloseTo(5.2, 9);
    expect(m.tempo.toBeats(5.2)).toBeCloseTo(8, 9);
  });

  it('format 1: the conductor track’s F♯ minor signature (sf 3, mi 1) is read as F♯ minor, not A', () => {
    expect(readMidi(fixture('format1-ppq480.mid')).key).toMatchObject({ tonic: 'F#', mode: 'minor', fifths: 3 });
  });

  it('ppq 960: 120 BPM until the only tempo event at beat 4, 60 BPM after (SMF 1.0 default tempo)', () => {
    const m = readMidi(fixture('format1-ppq960.mid'));
    expect(m.tempo.toSeconds(4)).toBeCloseTo(2, 9);
    expect(m.tempo.toSeconds(6)).toBeCloseTo(4, 9);
  });

  it('ppq 960: a triplet lands on a third of a beat, and the note after a 20-beat rest keeps its ontime', () => {
    const m = readMidi(fixture('format1-ppq960.mid'));
    expect(m.notes.slice(0, 3).map((n) => n.onset)).toEqual([0, 1 / 3, 2 / 3]);
    expect(m.notes[m.notes.length - 1]).toMatchObject({ onset: 28, duration: 1, pitch: 48 });
    expect(m.beats).toBe(29);
  });
});

describe('MIDI import: unreadable files get an error naming the file and what is wrong', () => {
  const dir = mkdtempSync(join(tmpdir(), 'earwitness-midi-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const write = (name: string, bytes: Uint8Array | string): string => {
    const file = join(dir, name);
    writeFileSync(file, bytes);
    return file;
  };
  const good = readFileSync(fixture('format0-ppq96.mid'));

  it.each([
    ['empty.mid', new Uint8Array(), /empty.mid: the file is empty/],
    ['text.mid', 'not midi at all, just words', /text.mid: not a Standard MIDI File/],
    // SMF 1.0: a negative division (high bit set) is SMPTE time, not ticks per quarter note.
    ['smpte.mid', Uint8Array.from([...good.subarray(0, 12), 0xe7, 0x28, ...good.subarray(14)]), /smpte.mid: SMPTE time division/],
    ['zero-ppq.mid', Uint8Array.from([...good.subarray(0, 12), 0, 0, ...good.subarray(14)]), /zero-ppq.mid: the header gives 0 ticks/],
    // SMF 1.0 chunk lengths: a file cut short must not read as a shorter piece.
    ['cut.mid', good.subarray(0, 40), /cut.mid: damaged MIDI data \(track 1 of 1 is cut short: it declares 238 bytes, 18 follow\)/],
    ['lost-track.mid', Uint8Array.from([...good.subarray(0, 10), 0, 2, ...good.subarray(12)]), /lost-track.mid: damaged MIDI data \(the header announces 2 tracks, the file ends after 1\)/],
    ['bad-chunk.mid', Uint8Array.from([...good.subarray(0, 14), ...Buffer.from('XTrk'), ...good.subarray(18)]), /bad-chunk.mid: damaged MIDI data \(.*XTrk/],
  ])('%s', (name, bytes, message) => {
    const file = write(name, bytes);
    expect(() => readMidi(file)).toThrow(MidiFileError);
    expect(() => readMidi(file)).toThrow(message);
  });

  it('a missing file and a file over the size limit', () => {
    expect(() => readMidi(join(dir, 'absent.mid'))).toThrow(/absent.mid: cannot be read \(ENOENT\)/);
    expect(() => readMidi(write('big.mid', good), { maxBytes: 100 })).toThrow(/big.mid: is 260 bytes, over the limit of 100 bytes/);
  });

  it('parseMidi names the file it was given', () => {
    expect(() => parseMidi(new Uint8Array([1, 2, 3]), 'take-7.mid')).toThrow(/^take-7.mid: /);
  });
});
