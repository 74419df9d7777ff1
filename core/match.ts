/**
 * Matching a query window against a corpus, exactly.
 *
 * A window's score is its best over every piece and every translation t
 * (from the corpus to the query) of |(C + t) ∩ window| / max(|window|,
 * |excerpt|), where the excerpt is the corpus notes inside the W-beat window
 * that t aligns with the query window. Transposition is measured from the
 * corpus excerpt to the query: the corpus passage played 5 semitones higher
 * has transposition +5.
 *
 * @example
 *   const m = exactMatcher(corpusPoints(corpus, 'chromatic'), 16);
 *   m.best(windowPoints, toGrains(32))
 *   // → { piece: 3, pieceStart: 8, transposition: 5, matched: 24, excerptNotes: 24, score: 1 }
 */
import { type Point, GRAINS_PER_BEAT, countInSpan, toGrains } from './note.js';
import { keyTranslation, translationCounts } from './cardinality.js';
import type { CorpusPoints } from './corpus.js';

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
  /** In [0, 1]: 1 when the matched material is found in one corpus place only (core/distinctiveness.ts). */
  distinctiveness?: number;
}

export interface MatchOptions {
  /** Piece index to leave out (the human baseline scores a piece against the rest). */
  exclude?: number;
}

/** Finds a query window's best match in a corpus. */
export interface WindowMatcher {
  readonly windowBeats: number;
  /** `window` holds the query's points with ontime in [start, start + W), sorted. */
  best(window: readonly Point[], startGrains: number, options?: MatchOptions): WindowMatch | null;
}

/**
 * Total order on matches: higher score, more matched notes, earlier piece,
 * earlier excerpt, smaller then lower transposition. Every matcher breaks
 * ties this way, so the indexed and exact paths agree to the letter.
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

/**
 * Scores the translations of one piece given their coincidence counts, best
 * first: a translation's score can be no more than count / |window|, so the
 * scan stops once that bound falls below the best found.
 */
export function bestOfCounts(
  piece: number,
  points: readonly Point[],
  counts: Map<number, number>,
  window: readonly Point[],
  startGrains: number,
  windowGrains: number,
  incumbent: WindowMatch | null,
): WindowMatch | null {
  let most = 0;
  for (const c of counts.values()) if (c > most) most = c;
  if (incumbent && most / window.length < incumbent.score) return incumbent;
  const ranked = [...counts].sort((x, y) => y[1] - x[1]);
  let best = incumbent;
  for (const [key, matched] of ranked) {
    if (best && matched / window.length < best.score) break;
    const t = keyTranslation(key);
    const from = startGrains - t.at;
    const excerptNotes = countInSpan(points, from, from + windowGrains);
    const candidate: WindowMatch = {
      piece,
      pieceStart: from / GRAINS_PER_BEAT,
      transposition: t.pitch,
      matched,
      excerptNotes,
      score: matched / Math.max(window.length, excerptNotes),
    };
    if (betterMatch(candidate, best)) best = candidate;
  }
  return best;
}

/** Folds every piece a search may look in (not left out, not empty) into the best match so far. */
export function bestOverPieces(
  corpus: CorpusPoints,
  options: MatchOptions,
  step: (piece: number, points: readonly Point[], best: WindowMatch | null) => WindowMatch | null,
): WindowMatch | null {
  let best: WindowMatch | null = null;
  corpus.points.forEach((points, piece) => {
    if (piece !== options.exclude && points.length > 0) best = step(piece, points, best);
  });
  return best;
}

/** Brute force over every pair of query and corpus points: the reference every faster path must equal. */
export function exactMatcher(corpus: CorpusPoints, windowBeats: number): WindowMatcher {
  const windowGrains = toGrains(windowBeats);
  return {
    windowBeats,
    best(window, startGrains, options = {}) {
      if (window.length === 0) return null;
      return bestOverPieces(corpus, options, (piece, points, best) => bestOfCounts(piece, points, translationCounts(points, window), window, startGrains, windowGrains, best));
    },
  };
}
