import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseMidi as parseWithMidiFile } from 'midi-file';
import type { Note } from '../../../core/note.js';
import { midiBytes, tracksByChannel } from '../../../bridge/formats/midi-write.js';
import { parseMidi } from '../../../bridge/formats/midi-file.js';
import { tool } from '../../helpers/which.js';

const midicsv = tool('midicsv', 'midicsv');

const notes: Note[] = [
  { onset: 0, duration: 1, pitch: 60, morph: 60, velocity: 100, channel: 1 },
  { onset: 0.5, duration: 0.25, pitch: 67, morph: 64, velocity: 1, channel: 1 },
  // Ends exactly where the next note of the same pitch begins.
  { onset: 1, duration: 1, pitch: 60, morph: 60, velocity: 127, channel: 1 },
  { onset: 1 / 3, duration: 2 / 3, pitch: 43, morph: 43, velocity: 0, channel: 2 },
  { onset: 7.125, duration: 0, pitch: 72, morph: 67, velocity: 64, channel: 10 },
];
const bytes = midiBytes(tracksByChannel(notes, (ch) => `channel ${ch}`), { title: 'take 9', bpm: 96 });

describe('Standard MIDI File output', () => {
  it('is read back by our reader with the same notes, on the grain grid', () => {
    const back = parseMidi(bytes, 'take.mid', { percussion: true });
    expect(back.ppq).toBe(3840);
    expect(back.notes.map((n) => [n.onset, n.pitch, n.channel])).toEqual(
      [...notes].sort((a, b) => a.onset - b.onset || a.pitch - b.pitch).map((n) => [Math.round(n.onset * 3840) / 3840, n.pitch, n.channel]),
    );
    expect(back.title).toBe('take 9');
  });

  it('holds what SMF 1.0 says, as the npm midi-file parser reads it', () => {
    const smf = parseWithMidiFile(bytes);
    // SMF 1.0: format 1, division = ticks per quarter note; one conductor track plus one per channel.
    expect(smf.header).toMatchObject({ format: 1, ticksPerBeat: 3840, numTracks: 4 });
    const events = smf.tracks.flat();
    // SMF 1.0 tempo meta: microseconds per quarter note; 60,000,000 / 96 = 625,000.
    expect(events.filter((e) => e.type === 'setTempo').map((e) => (e as { microsecondsPerBeat: number }).microsecondsPerBeat)).toEqual([625000]);
    expect(events.some((e) => e.type === 'keySignature')).toBe(false);
    const ons = events.filter((e): e is typeof e & { velocity: number; channel: number; noteNumber: number } => e.type === 'noteOn' && (e as { velocity: number }).velocity > 0);
    expect(ons).toHaveLength(notes.length);
    // MIDI 1.0 numbers channels 0–15 on the wire.
    expect(new Set(ons.map((e) => e.channel))).toEqual(new Set([0, 1, 9]));
    // A velocity of 0 would be a Note Off (MIDI 1.0), so the silent-looking note is written at 1.
    expect(ons.map((e) => e.velocity).sort((a, b) => a - b)).toEqual([1, 1, 64, 100, 127]);
  });

  it('writes delta times as the variable-length quantities of SMF 1.0', () => {
    // SMF 1.0's table of examples: number → representation.
    const examples: [number, number[]][] = [
      [0x40, [0x40]],
      [0x7f, [0x7f]],
      [0x80, [0x81, 0x00]],
      [0x2000, [0xc0, 0x00]],
      [0x3fff, [0xff, 0x7f]],
      [0x4000, [0x81, 0x80, 0x00]],
      [0x1fffff, [0xff, 0xff, 0x7f]],
      [0x200000, [0x81, 0x80, 0x80, 0x00]],
      [0x8000000, [0xc0, 0x80, 0x80, 0x00]],
      [0xfffffff, [0xff, 0xff, 0xff, 0x7f]],
    ];
    for (const [ticks, bytes] of examples) {
      const smf = midiBytes([{ name: 'n', channel: 1, notes: [{ onset: ticks / 3840, duration: 1 / 3840, pitch: 60, velocity: 64 }] }], { title: 't' });
      // The note track: MTrk, length, delta 0, track name "n", then the delta before the Note On (0x90 key 60 velocity 64).
      const mtrk = Buffer.from(smf).lastIndexOf('MTrk', undefined, 'latin1');
      const body = [...smf.subarray(mtrk + 8)]; // after the id and the 32-bit length
      expect(body.slice(0, 4)).toEqual([0x00, 0xff, 0x03, 0x01]);
      expect(body.slice(5, 5 + bytes.length + 3)).toEqual([...bytes, 0x90, 60, 64]);
    }
  });

  it('starts an excerpt at tick 0 when given its first beat', () => {
    const excerpt = midiBytes([{ name: 'x', channel: 1, notes: [{ onset: 32, duration: 1, pitch: 60, velocity: 90 }] }], { title: 'x', from: 32 });
    expect(parseMidi(excerpt, 'x.mid').notes[0].onset).toBe(0);
  });

  it('refuses a channel outside 1–16 and a tempo that is not positive', () => {
    expect(() => midiBytes([{ name: 'x', channel: 17, notes: [] }], { title: 'x' })).toThrow(/channel must be 1–16, got 17/);
    expect(() => midiBytes([], { title: 'x', bpm: 0 })).toThrow(/bpm must be a positive number/);
  });

  describe.skipIf(!midicsv.path)(`against Debian's ${midicsv.label}`, () => {
    it('midicsv reads every note, the division and the tempo', () => {
      const file = join(mkdtempSync(join(tmpdir(), 'ew-midi-')), 'take.mid');
      writeFileSync(file, bytes);
      const rows = execFileSync('midicsv', [file], { encoding: 'utf8' }).split('\n').map((l) => l.split(',').map((c) => c.trim()));
      // midicsv(1): "Header, format, nTracks, division"; "Note_on_c, channel, note, velocity"; "Tempo, number" in µs per quarter note.
      expect(rows.find((r) => r[2] === 'Header')?.slice(3)).toEqual(['1', '4', '3840']);
      expect(rows.filter((r) => r[2] === 'Note_on_c' && Number(r[5]) > 0)).toHaveLength(notes.length);
      expect(rows.filter((r) => r[2] === 'Tempo').map((r) => r[3])).toEqual(['625000']);
    });
  });
});
