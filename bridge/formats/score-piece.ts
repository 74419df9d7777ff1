/**
 * What a score file reader gives back, whatever the format: pieces of spelled
 * notes (onsets and durations in quarter-note beats, MIDI note numbers,
 * morphetic pitch), their key, length and time signatures, and the error a
 * reader throws for a file it cannot read.
 *
 * A file may hold several pieces (an ABC tune book): each has an `id` within
 * the file (the tune's X: number), and is known as `file#id`; a file holding
 * one piece gives it the id null and is known by its path alone.
 *
 * @example
 *   pieceId('tunes/book.abc', '3')    // → 'tunes/book.abc#3'
 *   throw new ScoreFileError('song.musicxml', 'not MusicXML (its root element is <html>)')
 */
import { readFileSync, statSync } from 'node:fs';
import { type Note, GRAINS_PER_BEAT } from '../../core/note.js';
import type { Key } from '../../core/spelling.js';
import type { TimeSignature } from '../../core/bars.js';

export type { TimeSignature };

/** Most notes one score or tune may come to with its repeats written out. */
export const MAX_SCORE_NOTES = 4_000_000;

/** A time signature from the file, from `beat` (quarter notes from the start) on. */

export interface ScorePiece {
  /** The piece's id within its file (an ABC tune's X: number), or null for a file of one piece. */
  id: string | null;
  title: string | null;
  /** Spelled notes, sorted by onset then pitch. */
  notes: Note[];
  key: Key;
  /** Length in beats (end of the last note). */
  beats: number;
  /** Time signatures in the order they take effect, as played (repeats written out). */
  meters: TimeSignature[];
}

export interface ScoreReadOptions {
  /** Keep percussion: MIDI channel 10. */
  percussion?: boolean;
  /** Largest file accepted, in bytes. */
  maxBytes?: number;
}

/** A piece of a file that could not be read, while the file's other pieces could. */
export interface SkippedPiece {
  id: string;
  error: string;
}

export interface ScoreFile {
  pieces: ScorePiece[];
  skipped: SkippedPiece[];
}

/** A score file (MusicXML or ABC) that could not be read, with the file and the reason. */
export class ScoreFileError extends Error {
  constructor(readonly file: string, readonly reason: string) {
    super(`${file}: ${reason}`);
    this.name = 'ScoreFileError';
  }
}

/** How a piece of a file is named in a corpus: the file's path, and `#id` for one of several pieces. */
export const pieceId = (path: string, id: string | null): string => (id === null ? path : `${path}#${id}`);

/**
 * A time in beats put back on the grain grid when it is that close to it
 * (within 1/20 grain), so sums of thirds and fifths of a beat come out as
 * the same numbers a MIDI file's ticks give; other times are kept as they are.
 */
export function onGrid(beats: number): number {
  const grains = beats * GRAINS_PER_BEAT;
  const near = Math.round(grains);
  return Math.abs(grains - near) < 0.05 ? near / GRAINS_PER_BEAT : beats;
}

/** A file's bytes; a file that cannot be read, or is over `max` bytes, is refused with `fail(reason)`. */
export function readWithin(file: string, max: number, fail: (reason: string) => Error): Buffer {
  let size: number;
  try {
    size = statSync(file).size;
  } catch (e) {
    throw fail(`cannot be read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  if (size > max) throw fail(`is ${size} bytes, over the limit of ${max} bytes`);
  return readFileSync(file);
}
