/**
 * Reading Standard MIDI Files into notes, through @tonejs/midi.
 *
 * Any resolution, formats 0 and 1, every track. Onsets and durations are
 * converted from ticks to beats; the tempo map is kept for seconds ↔ beats.
 * Channel 10 (General MIDI percussion: drum sounds, not pitches) is left out
 * unless asked for. A key signature meta event, when present, decides the
 * spelling; otherwise the key is estimated from the notes.
 */
import { readFileSync, statSync } from 'node:fs';
import tonejs from '@tonejs/midi';
import type { Note } from '../core/note.js';
import { type Key, estimateKey, fifthsOfName, keyFromSignature, spellNotes } from '../core/spelling.js';
import { type TempoMap, tempoMap } from '../core/tempo.js';
import { notesLength } from '../core/corpus.js';

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
 * SMF 1.0 chunks are an id, a 32-bit length and that many bytes. The parser
 * underneath reads a chunk cut short by the end of the file, or a file with
 * fewer tracks than its header announces, as if it were whole, so a
 * truncated file would silently lose its tail: walk the chunks first.
 */
function checkChunks(bytes: Uint8Array, file: string): void {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const tracks = view.getUint16(10);
  let at = 8 + view.getUint32(4);
  for (let found = 0; found < tracks; found++) {
    if (at + 8 > bytes.length) throw new MidiFileError(file, `damaged MIDI data (the header announces ${tracks} track${tracks === 1 ? '' : 's'}, the file ends after ${found})`);
    const length = view.getUint32(at + 4);
    const left = bytes.length - at - 8;
    if (length > left) throw new MidiFileError(file, `damaged MIDI data (track ${found + 1} of ${tracks} is cut short: it declares ${length} bytes, ${left} follow)`);
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
    ppq,
    beats: notesLength(raw),
  };
}

/** Reads and parses an SMF from disk. */
export function readMidi(file: string, options: MidiReadOptions = {}): MidiPiece {
  const max = options.maxBytes ?? MAX_MIDI_BYTES;
  let size: number;
  try {
    size = statSync(file).size;
  } catch (e) {
    throw new MidiFileError(file, `cannot be read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  if (size > max) throw new MidiFileError(file, `is ${size} bytes, over the limit of ${max} bytes`);
  return parseMidi(readFileSync(file), file, options);
}
