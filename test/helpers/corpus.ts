/**
 * Corpora built in core terms, with no MIDI file in between: pieces from
 * notes, spelled in their estimated key as bridge/formats/midi-file.ts would.
 *
 * @example
 *   const corpus = corpusOf([pieceOf('a.mid', notesA), pieceOf('b.mid', notesB)]);
 *   const view = corpusPoints(corpus, 'chromatic');
 */
import type { Note } from '../../core/note.js';
import { type Corpus, type Piece, notesLength } from '../../core/corpus.js';
import { estimateKey, spellNotes } from '../../core/spelling.js';

export function pieceOf(path: string, notes: readonly Note[]): Piece {
  const key = estimateKey(notes);
  const sorted = [...notes].sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  return { path, title: null, beats: notesLength(sorted), key, notes: spellNotes(sorted, key) };
}

export const corpusOf = (pieces: Piece[]): Corpus => ({ pieces });
