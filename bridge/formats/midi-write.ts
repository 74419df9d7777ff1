/**
 * Writing notes as a Standard MIDI File (SMF 1.0, format 1), so a session or
 * an excerpt can be auditioned in any DAW.
 *
 * The bytes are laid out here rather than by @tonejs/midi's writer: that
 * writer copies the whole track for every delta time over 127 ticks, so an
 * hour of playing took minutes; it also encodes key signatures wrongly.
 * This one writes no key signature (a live session has none to give), a
 * tempo, a name per track, and explicit Note Offs.
 *
 * The resolution is GRAINS_PER_BEAT ticks per quarter note: the file then
 * holds exactly the onsets the scorer compared, and reading it back scores
 * the same.
 *
 * @example
 *   writeFileSync('take.mid', midiBytes([{ name: 'channel 1', channel: 1, notes }], { title: 'session 4', bpm: 96 }));
 *   tracksByChannel(notes, (ch) => `channel ${ch}`)   // → one track per MIDI channel used
 */
import { type Note, GRAINS_PER_BEAT } from '../../core/note.js';
import { DEFAULT_BPM } from '../../core/tempo.js';

export type WrittenNote = Pick<Note, 'onset' | 'duration' | 'pitch' | 'velocity'>;

export interface MidiTrack {
  name: string;
  /** MIDI channel 1–16. */
  channel: number;
  notes: readonly WrittenNote[];
}

export interface MidiWriteOptions {
  /** Stored as the sequence name: the first track's name (SMF 1.0). */
  title: string;
  bpm?: number;
  /** Beat that becomes tick 0 (an excerpt starts at its window's start). */
  from?: number;
}

/** SMF 1.0 variable-length quantity: 7 bits a byte, most significant first, high bit on all but the last. */
function vlq(n: number, out: number[]): void {
  const bytes = [n & 0x7f];
  for (let v = Math.floor(n / 128); v > 0; v = Math.floor(v / 128)) bytes.unshift((v & 0x7f) | 0x80);
  out.push(...bytes);
}

/** SMF text is bytes; Latin-1 is what readers assume, so anything beyond it becomes "?". */
const latin1 = (s: string): number[] => [...s].map((c) => (c.charCodeAt(0) < 256 ? c.charCodeAt(0) : 0x3f));

const meta = (type: number, data: readonly number[]): number[] => {
  const out = [0xff, type];
  vlq(data.length, out);
  return [...out, ...data];
};
const trackName = (name: string): number[] => meta(0x03, latin1(name));
const END_OF_TRACK = [0xff, 0x2f, 0x00];

function chunk(id: string, data: readonly number[], out: number[]): void {
  const n = data.length;
  out.push(...latin1(id), (n >>> 24) & 0xff, (n >>> 16) & 0xff, (n >>> 8) & 0xff, n & 0xff);
  for (const b of data) out.push(b);
}

/** [tick, bytes] events → an MTrk body with delta times, in time order. */
function trackData(events: [number, number[]][]): number[] {
  const data: number[] = [];
  let now = 0;
  for (const [tick, bytes] of events) {
    vlq(tick - now, data);
    now = tick;
    for (const b of bytes) data.push(b);
  }
  vlq(0, data);
  data.push(...END_OF_TRACK);
  return data;
}

const clamp = (x: number, lo: number, hi: number): number => Math.min(hi, Math.max(lo, x));

function noteEvents(t: MidiTrack, from: number): [number, number[]][] {
  const status = t.channel - 1;
  const events: [number, number[], number][] = [];
  for (const n of t.notes) {
    if (!(Number.isInteger(n.pitch) && n.pitch >= 0 && n.pitch <= 127)) throw new RangeError(`track "${t.name}": pitch must be a MIDI note number 0–127, got ${n.pitch}`);
    const on = Math.round((n.onset - from) * GRAINS_PER_BEAT);
    if (!(on >= 0)) throw new RangeError(`track "${t.name}": a note at beat ${n.onset} starts before beat ${from}`);
    // A zero-length note is dropped by some sequencers on import; one tick keeps it audible and counted.
    const off = on + Math.max(1, Math.round(n.duration * GRAINS_PER_BEAT));
    // Velocity 0 would be a Note Off (MIDI 1.0).
    events.push([on, [0x90 | status, n.pitch, clamp(Math.round(n.velocity), 1, 127)], 1], [off, [0x80 | status, n.pitch, 64], 0]);
  }
  // At one tick, Note Offs first: a pitch ending where the same pitch begins again is released before it is struck.
  events.sort((a, b) => a[0] - b[0] || a[2] - b[2]);
  return events.map(([tick, bytes]) => [tick, bytes]);
}

export function midiBytes(tracks: readonly MidiTrack[], options: MidiWriteOptions): Uint8Array {
  const bpm = options.bpm ?? DEFAULT_BPM;
  if (!(Number.isFinite(bpm) && bpm > 0)) throw new RangeError(`bpm must be a positive number, got ${bpm}`);
  const from = options.from ?? 0;
  for (const t of tracks) {
    if (!(Number.isInteger(t.channel) && t.channel >= 1 && t.channel <= 16)) throw new RangeError(`track "${t.name}": channel must be 1–16, got ${t.channel}`);
  }
  const out: number[] = [];
  // MThd: length 6, format 1, track count (a conductor track first), ticks per quarter note.
  const count = tracks.length + 1;
  chunk('MThd', [0, 1, count >> 8, count & 0xff, GRAINS_PER_BEAT >> 8, GRAINS_PER_BEAT & 0xff], out);
  // Tempo meta FF 51 03: microseconds per quarter note.
  const us = Math.round(60_000_000 / bpm);
  if (us > 0xffffff) throw new RangeError(`bpm ${bpm} is too slow for an SMF tempo (at most 16,777,215 µs per quarter note)`);
  chunk('MTrk', trackData([[0, trackName(options.title)], [0, meta(0x51, [(us >> 16) & 0xff, (us >> 8) & 0xff, us & 0xff])]]), out);
  for (const t of tracks) chunk('MTrk', trackData([[0, trackName(t.name)], ...noteEvents(t, from)]), out);
  return Uint8Array.from(out);
}

/** One track per MIDI channel the notes use, in channel order. */
export function tracksByChannel<N extends WrittenNote & Pick<Note, 'channel'>>(notes: readonly N[], name: (channel: number) => string): MidiTrack[] {
  const channels = [...new Set(notes.map((n) => n.channel))].sort((a, b) => a - b);
  return channels.map((channel) => ({ name: name(channel), channel, notes: notes.filter((n) => n.channel === channel) }));
}
