/**
 * What matching a window means, whichever way it is done (core/pipeline.ts).
 *
 * A window's score is its best over every piece and every translation t
 * (from the corpus to the query) of |(C + t) ∩ window| / max(|window|,
 * |excerpt|), where the excerpt is the corpus notes inside the W-beat window
 * that t aligns with the query window. Transposition is measured from the
 * corpus excerpt to the query: the corpus passage played 5 semitones higher
 * has transposition +5.
 *
 * @example
 *   const m = windowMatcher(matchCorpus(view), { windowBeats: 16, mode: EXACT_MODE, candidates: 'every' });
 *   m.best({ points: windowPoints, startGrains: toGrains(32) })
 *   // → { piece: 3, pieceStart: 8, transposition: 5, matched: 24, excerptNotes: 24, score: 1 }
 */
import type { Point } from './note.js';

/** One window to match: its points and where it starts. */
export interface MatchWindow {
  /** The query's points with ontime in [startGrains, startGrains + W), sorted (core/note.ts toPoints). */
  points: readonly Point[];
  /** Where the window starts, in grains. */
  startGrains: number;
  /** Index of a corpus piece to leave out (the human baseline scores a piece against the rest). */
  exclude?: number;
}

export interface WindowMatch {
  /** Index of the piece in the corpus. */
  piece: number;
  /** Start beat of the matched excerpt in that piece (query window start − time shift). */
  pieceStart: number;
  /** Pitch shift from the corpus excerpt to the query. */
  transposition: number;
  /** Points that coincide under the translation. */
  matched: number;
  /** Points in the corpus excerpt. */
  excerptNotes: number;
  score: number;
  /** Played duration / corpus duration of the passage (1.5 = slower), from tempo-free matching. */
  timeScale?: number;
  /** In [0, 1]: 1 when the matched material is found in one corpus piece only (core/distinctiveness.ts). */
  distinctiveness?: number;
}

/** Finds a query window's best match in a corpus. */
export interface WindowMatcher {
  readonly windowBeats: number;
  best(window: MatchWindow): WindowMatch | null;
}

/**
 * Total order on matches: higher score, more matched notes, earlier piece,
 * earlier excerpt, smaller then lower transposition. Every candidate source
 * breaks ties this way, so their answers agree to the letter.
 */
export function betterMatch(a: WindowMatch, b: WindowMatch | null): boolean {
  if (!b) return true;
  return (
    (a.score - b.score ||
      a.matched - b.matched ||
      b.piece - a.piece ||
      b.pieceStart - a.pieceStart ||
      Math.abs(b.transposition) - Math.abs(a.transposition) ||
      b.transposition - a.transposition) > 0
  );
}

/** The better of two matches under `betterMatch`. */
export const better = (a: WindowMatch | null, b: WindowMatch | null): WindowMatch | null => (a && betterMatch(a, b) ? a : b);
