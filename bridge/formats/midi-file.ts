/**
 * Reading Standard MIDI Files into notes, through @tonejs/midi.
 *
 * Any resolution, formats 0 and 1, every track. Onsets and durations are
 * converted from ticks to beats; the tempo map is kept for seconds ↔ beats.
 * Channel 10 (General MIDI percussion: drum sounds, not pitches) is left out
 * unless asked for. Time signatures give the bars and beats positions are
 * shown in (core/bars.ts). A key signature meta event, when present, decides the
 * spelling; otherwise the key is estimated from the notes.
 *
 * Damaged or hostile bytes are refused before the parser underneath sees
 * them (it can loop forever on a negative length, and pairs notes in time
 * quadratic in a track's note count): every error is a MidiFileError.
 *
 * @example
 *   readMidi('songs/reel.mid').notes.length      // → 212
 *   parseMidi(bytes, 'take-7.mid')               // throws MidiFileError: take-7.mid: the file is empty
 */
import tonejs from '@tonejs/midi';
import type { Note } from '../../core/note.js';
import { type Key, estimateKey, fifthsOfName, keyFromSignature, spellNotes } from '../../core/spelling.js';
import { type TempoMap, tempoMap } from '../../core/tempo.js';
import { notesLength } from '../../core/corpus.js';
import { type TimeSignature, normalMeter } from '../../core/bars.js';
import { readWithin } from './score-piece.js';

const { Midi } = tonejs;

export interface MidiReadOptions {
  /** Keep channel 10 (percussion). */
  percussion?: boolean;
  /** Largest file accepted, in bytes. */
  maxBytes?: number;
}

export interface MidiPiece {
  title: string | null;
  notes: Note[];
  key: Key;
  /** True when the key came from a key signature in the file. */
  keyFromFile: boolean;
  tempo: TempoMap;
  /** Time signatures (SMF 1.0 meta event 0xFF 0x58) at their beats; 4/4 from the start when the file has none. */
  meter: TimeSignature[];
  ppq: number;
  beats: number;
}

export const MAX_MIDI_BYTES = 16 * 1024 * 1024;
const PERCUSSION_CHANNEL = 10;

/** An SMF that could not be read, with the file and the reason. */
export class MidiFileError extends Error {
  constructor(readonly file: string, readonly reason: string) {
    super(`${file}: ${reason}`);
    this.name = 'MidiFileError';
  }
}

function keyOf(header: InstanceType<typeof Midi>['header'], notes: Note[]): { key: Key; fromFile: boolean } {
  const sig = header.keySignatures.find((k) => typeof k.key === 'string');
  if (sig) {
    try {
      return { key: keyFromSignature(fifthsOfName(sig.key), sig.scale === 'minor'), fromFile: true };
    } catch {
      // A key name the library could not map: fall through to estimating.
    }
  }
  return { key: estimateKey(notes), fromFile: false };
}

/**
 * Most Note On and Note Off events one track may hold: the parser
 * underneath pairs them in time quadratic in their number (timings in
 * test/bench/RESULTS.md, "Bad MIDI files"), so a track past this is
 * refused at once instead of stalling whoever reads it.
 */
export const MAX_TRACK_NOTE_EVENTS = 100_000;
/** SMF 1.0: a variable-length quantity has at most 4 bytes (0x0FFFFFFF). */
const MAX_VLQ_BYTES = 4;
/** MIDI 1.0: data bytes after a channel status byte, by its high nibble (0x8–0xE). */
const DATA_BYTES: Record<number, number> = { 0x8: 2, 0x9: 2, 0xa: 2, 0xb: 2, 0xc: 1, 0xd: 1, 0xe: 2 };

/**
 * Walks one MTrk's events as the parser underneath will, counting note
 * events, and refuses what would hang it: a variable-length number over 4
 * bytes (it decodes one of 5 as a negative length and reads the same bytes
 * again, forever). Positions in messages are byte offsets in the file.
 */
function checkTrack(bytes: Uint8Array, start: number, end: number, where: string, file: string): void {
  const damaged = (what: string): MidiFileError => new MidiFileError(file, `damaged MIDI data (${where}: ${what})`);
  let at = start;
  const vlq = (): number => {
    const from = at;
    let n = 0;
    for (let k = 0; k < MAX_VLQ_BYTES && at < end; k++) {
      const b = bytes[at++];
      n = n * 128 + (b & 0x7f);
      if (!(b & 0x80)) return n;
    }
    if (at - from < MAX_VLQ_BYTES) return n; // cut short by the end of the track: the parser stops there too
    throw damaged(`the variable-length number at byte ${from} runs past the ${MAX_VLQ_BYTES} bytes SMF 1.0 allows`);
  };
  let status = 0;
  let notes = 0;
  while (at < end) {
    vlq();
    if (at >= end) break;
    const b = bytes[at++];
    if (b === 0xff || b === 0xf0 || b === 0xf7) {
      if (b === 0xff) at++; // the meta event's type
      const length = vlq(); // read first: it moves `at`
      at += length;
    } else if (b >= 0xf0) {
      throw damaged(`byte ${at - 1} is 0x${b.toString(16)}, not an event a file may hold`);
    } else {
      // Running status: a data byte where a status byte would be repeats the last status (MIDI 1.0).
      if (b & 0x80) status = b;
      else if (status === 0) throw damaged(`byte ${at - 1} continues a running status before any status byte`);
      // MIDI 1.0: a data byte is 0–127; the parser underneath would take a larger one as a note number or velocity.
      const event = at - 1;
      for (let k = DATA_BYTES[status >> 4] - (b & 0x80 ? 0 : 1); k > 0 && at < end; k--, at++) {
        if (bytes[at] & 0x80) throw damaged(`byte ${at} is 0x${bytes[at].toString(16)}, where the event at byte ${event} needs a data byte (0 to 127, MIDI 1.0)`);
      }
      if ((status >> 4 === 0x8 || status >> 4 === 0x9) && ++notes > MAX_TRACK_NOTE_EVENTS) {
        throw new MidiFileError(file, `${where} holds more than ${MAX_TRACK_NOTE_EVENTS.toLocaleString('en')} note events (Note On and Note Off), the most a track may hold; split it into several tracks`);
      }
    }
  }
}

/**
 * SMF 1.0 chunks are an id, a 32-bit length and that many bytes. The parser
 * underneath reads a chunk cut short by the end of the file, or a file with
 * fewer tracks than its header announces, as if it were whole, so a
 * truncated file would silently lose its tail: walk the chunks first, and
 * the events of each track (checkTrack).
 */
function checkChunks(bytes: Uint8Array, file: string): void {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const tracks = view.getUint16(10);
  const headerLength = view.getUint32(4);
  if (headerLength < 6 || 8 + headerLength > bytes.length) {
    throw new MidiFileError(file, `damaged MIDI data (the MThd header declares ${headerLength} bytes; SMF 1.0 gives it at least 6, and ${bytes.length - 8} follow)`);
  }
  let at = 8 + headerLength;
  for (let found = 0; found < tracks; found++) {
    if (at + 8 > bytes.length) throw new MidiFileError(file, `damaged MIDI data (the header announces ${tracks} track${tracks === 1 ? '' : 's'}, the file ends after ${found})`);
    const length = view.getUint32(at + 4);
    const left = bytes.length - at - 8;
    if (length > left) throw new MidiFileError(file, `damaged MIDI data (track ${found + 1} of ${tracks} is cut short: it declares ${length} bytes, ${left} follow)`);
    if (view.getUint32(at) === 0x4d54726b) checkTrack(bytes, at + 8, at + 8 + length, `track ${found + 1} of ${tracks}`, file); // "MTrk"
    at += 8 + length;
  }
}

/** Parses SMF bytes. Throws MidiFileError naming `file` on anything unreadable. */
export function parseMidi(bytes: Uint8Array, file: string, options: MidiReadOptions = {}): MidiPiece {
  if (bytes.length === 0) throw new MidiFileError(file, 'the file is empty');
  if (bytes.length < 14 || String.fromCharCode(...bytes.subarray(0, 4)) !== 'MThd') {
    throw new MidiFileError(file, 'not a Standard MIDI File (it does not start with an MThd header)');
  }
  const division = (bytes[12] << 8) | bytes[13];
  if (division & 0x8000) throw new MidiFileError(file, 'SMPTE time division is not supported (only ticks per quarter note)');
  if (division === 0) throw new MidiFileError(file, 'the header gives 0 ticks per quarter note');
  checkChunks(bytes, file);
  let midi: InstanceType<typeof Midi>;
  try {
    midi = new Midi(bytes);
  } catch (e) {
    // The parser underneath throws plain strings as well as Errors.
    throw new MidiFileError(file, `damaged MIDI data (${e instanceof Error ? e.message : String(e)})`);
  }
  const ppq = midi.header.ppq;
  const raw: Note[] = [];
  for (const track of midi.tracks) {
    const channel = track.channel + 1;
    if (channel === PERCUSSION_CHANNEL && !options.percussion) continue;
    for (const n of track.notes) {
      if (!Number.isFinite(n.ticks) || !Number.isFinite(n.durationTicks)) continue;
      raw.push({ onset: n.ticks / ppq, duration: Math.max(0, n.durationTicks) / ppq, pitch: n.midi, morph: n.midi, velocity: Math.round(n.velocity * 127), channel });
    }
  }
  raw.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  const { key, fromFile } = keyOf(midi.header, raw);
  const title = midi.header.name?.trim() || midi.tracks.find((t) => t.name?.trim())?.name.trim() || null;
  return {
    title,
    notes: spellNotes(raw, key),
    key,
    keyFromFile: fromFile,
    tempo: tempoMap(midi.header.tempos.map((t) => ({ beat: t.ticks / ppq, bpm: t.bpm }))),
    meter: normalMeter(midi.header.timeSignatures.map((t) => ({ beat: t.ticks / ppq, numerator: t.timeSignature[0], denominator: t.timeSignature[1] }))),
    ppq,
    beats: notesLength(raw),
  };
}

/** Reads and parses an SMF from disk. */
export function readMidi(file: string, options: MidiReadOptions = {}): MidiPiece {
  return parseMidi(readWithin(file, options.maxBytes ?? MAX_MIDI_BYTES, (reason) => new MidiFileError(file, reason)), file, options);
}
