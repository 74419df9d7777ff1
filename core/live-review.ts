/**
 * The session as it was heard: the live scoring passes placed in bars (the
 * session's and each matched piece's), and each live warning's two
 * excerpts — what was played in the warned window, up to the note that
 * raised it, beside the corpus passage — as the worst windows have them.
 *
 * @example
 *   heardPasses(passes, { meter: [], pieces })
 *   // → [{ seq: 12, beat: 4, bar: 2, beatInBar: 1, score: 0.72, piece: 'reel.mid', pieceBar: 5, … }]
 *   warningPairs(notes, warnings, { pieces, window: 8, tolerance: 0.1, meter: [] })[0].query   // the warned notes, matched ones flagged
 */
import { type Meter, type TimeSignature, barFields, normalMeter } from './bars.js';
import { type Piece, pieceName } from './corpus.js';
import type { Note } from './note.js';
import { type ExcerptPair, type MatchedWindow, excerptPair } from './review.js';

/** One live scoring pass as the session log keeps it. */
export interface LivePass {
  /** Seq of the last note the pass included. */
  seq: number;
  /** Wall-clock time, ms since the epoch. */
  time: number;
  score: number;
  /** Where the window scored starts, in the session's beats. */
  windowStart: number;
  windowNotes: number;
  /** The best match; null fields when nothing matched. */
  piece: string | null;
  transposition: number | null;
  pieceStart: number | null;
  matched: number;
}

/** A live pass placed: `beat` is where its window starts, in the session's bars; the match in the piece's. */
export interface HeardPass extends Omit<LivePass, 'windowStart'> {
  beat: number;
  bar: number | null;
  beatInBar: number | null;
  title: string | null;
  pieceBar: number | null;
  pieceBeatInBar: number | null;
}

/** What a live warning says of its match (the session log's row). */
export interface WarnedWindow {
  seq: number;
  piece: string;
  title: string;
  score: number;
  transposition: number;
  pieceStart: number;
  /** Where the warned window starts, in the session's beats. */
  startBeat: number;
}

/** A piece by its path; passes and warnings name pieces by path. */
const byPath = (pieces: readonly Piece[]): Map<string, Piece> => new Map(pieces.map((p) => [p.path, p]));

/** Every live pass in bars: the session's metre for where its window starts, the piece's for where the match sits. */
export function heardPasses(passes: readonly LivePass[], o: { meter: Meter; pieces: readonly Piece[] }): HeardPass[] {
  const pieces = byPath(o.pieces);
  return passes.map(({ windowStart, ...p }) => {
    const piece = p.piece === null ? undefined : pieces.get(p.piece);
    const inPiece = barFields(piece?.meter ?? [], p.pieceStart);
    return { ...p, beat: windowStart, ...barFields(o.meter, windowStart), title: piece ? pieceName(piece) : p.piece, pieceBar: inPiece.bar, pieceBeatInBar: inPiece.beatInBar };
  });
}

export interface WarningPairOptions {
  pieces: readonly Piece[];
  /** The live window's length in beats. */
  window: number;
  /** Beats a played onset could stray and still match, as live. */
  tolerance: number;
  /** The session's metre. */
  meter: Meter;
}

/**
 * Each warning's two excerpts, numbered as the warnings are: the notes of
 * the warned window that had been played when it was raised (seq up to the
 * warning's), and the corpus passage, flagged where the warning's
 * translation lands one on the other. Matched in chromatic pitch, as the live
 * scorer does. A warning whose piece is no longer in the corpus is left out.
 */
export function warningPairs<N extends Note & { seq: number }>(notes: readonly N[], warnings: readonly WarnedWindow[], o: WarningPairOptions): ExcerptPair<N>[] {
  const pieces = byPath(o.pieces);
  const queryMeter: TimeSignature[] = normalMeter(o.meter);
  const out: ExcerptPair<N>[] = [];
  warnings.forEach((w, i) => {
    const piece = pieces.get(w.piece);
    if (!piece) return;
    const heard = notes.filter((n) => n.seq <= w.seq);
    const window: MatchedWindow = {
      start: w.startBeat,
      end: w.startBeat + o.window,
      ...barFields(o.meter, w.startBeat),
      notes: 0,
      score: w.score,
      tooShort: false,
      match: { piece: w.piece, title: w.title, pieceStart: w.pieceStart, ...barFields(piece.meter ?? [], w.pieceStart), transposition: w.transposition, matched: 0, excerptNotes: 0 },
    };
    const pair = excerptPair(heard, window, piece, 'chromatic', o.tolerance);
    window.notes = pair.query.length;
    window.match.matched = pair.query.filter((n) => n.matched).length;
    window.match.excerptNotes = pair.corpus.length;
    out.push({ rank: i + 1, queryIndex: 0, window, ...pair, queryMeter, pieceMeter: normalMeter(piece.meter ?? []) });
  });
  return out;
}
