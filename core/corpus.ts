/**
 * The reference corpus: pieces with their notes, and the point sets a
 * matcher works on for one pitch dimension.
 *
 * @example
 *   const view = corpusPoints(corpus, 'chromatic');
 *   view.points[0]   // sorted, de-duplicated points of the first piece
 */
import type { Key } from './spelling.js';
import type { TimeSignature } from './bars.js';
import { type Note, type PitchMode, type Point, toPoints } from './note.js';

export interface Piece {
  /** Path relative to the corpus folder: the piece's identity. */
  path: string;
  /** Title from the file's meta events, when it has one. */
  title: string | null;
  /** Length in beats (end of the last note). */
  beats: number;
  key: Key;
  /** Its time signatures (core/bars.ts), as the file gives them; absent or empty counts as 4/4. */
  meter?: TimeSignature[];
  /** Spelled notes, sorted by onset. */
  notes: Note[];
}

export interface Corpus {
  pieces: Piece[];
}

export interface CorpusPoints {
  mode: PitchMode;
  pieces: readonly Piece[];
  points: Point[][];
  /** Total points across pieces. */
  size: number;
}

export function corpusPoints(corpus: Corpus, mode: PitchMode): CorpusPoints {
  const points = corpus.pieces.map((p) => toPoints(p.notes, mode));
  return { mode, pieces: corpus.pieces, points, size: points.reduce((s, p) => s + p.length, 0) };
}

/** The name a person knows a piece by: its title, else its file name. */
export const pieceName = (piece: Piece): string => piece.title ?? piece.path.split('/').pop()!.replace(/\.(midi?|musicxml|xml|mxl)$/i, '');

/** Length in beats of a set of notes: the end of the last note to sound. */
export const notesLength = (notes: readonly Note[]): number => notes.reduce((end, n) => Math.max(end, n.onset + n.duration), 0);
