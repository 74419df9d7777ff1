/**
 * When a live score becomes a warning, and when the warning clears.
 *
 * An evaluation is *hot* when its window holds at least `minNotes` notes and
 * scores at least `threshold`, and *cool* when it scores below
 * `threshold − hysteresis` (or holds fewer than `minNotes`). The rule:
 *
 * - `consecutive` hot evaluations in a row raise one warning, naming the
 *   passage of the last of them.
 * - While it stands, hot evaluations of the same passage — the same piece,
 *   with an excerpt overlapping the one warned about — raise nothing more;
 *   the warning follows the passage along.
 * - It clears after `consecutive` cool evaluations in a row. Scores in the
 *   band between the two thresholds keep it standing (that band is the
 *   hysteresis: a score hovering at the threshold does not flicker).
 * - `consecutive` hot evaluations of a *different* passage clear it and
 *   raise a warning for that one.
 * - `reset` (a new passage begins) clears it at once.
 * - With `warn` false nothing is ever raised.
 * - A recent stretch of the window that warns on its own (core/stretch.ts
 *   judged it: `stretch.hot`) makes the evaluation hot too, naming the
 *   stretch's passage, whatever the whole window scores, and raises at once:
 *   its rule is already strict (a threshold per length, enough onsets,
 *   distinctive material), and a quote is warned about while it is still
 *   short. `consecutive` counts whole-window hot evaluations.
 * - A stretch of the standing passage that scores within `hysteresis` of its
 *   threshold is not cool, whatever the whole window scores: a quote warned
 *   about early keeps its warning while the window still holds the playing
 *   before it.
 *
 * @example
 *   const config = { threshold: 0.6, hysteresis: 0.2, minNotes: 8, consecutive: 2, warn: true };
 *   let s = initialPolicy();
 *   const hot = { score: 0.9, windowNotes: 20, passage: { piece: 3, pieceStart: 8, beats: 16 } };
 *   ({ state: s } = stepPolicy(s, hot, config));
 *   stepPolicy(s, hot, config).actions   // → [{ type: 'raise', passage: { piece: 3, pieceStart: 8, beats: 16 } }]
 */

export interface PolicyConfig {
  /** Scores at or above this are hot, in [0, 1]. */
  threshold: number;
  /** A standing warning cools only below threshold − hysteresis. */
  hysteresis: number;
  /** Fewer notes than this in the window are never hot. */
  minNotes: number;
  /** Evaluations in a row that raise, and that clear. */
  consecutive: number;
  warn: boolean;
  /** A match less distinctive than this (core/distinctiveness.ts) is never hot: stock figures do not warn. Absent = 0. */
  minDistinctiveness?: number;
}

/** Where in the corpus an evaluation's best match lies. */
export interface Passage {
  piece: number;
  /** Excerpt start beat in the piece. */
  pieceStart: number;
  /** Excerpt length in beats. */
  beats: number;
}

export interface Evaluation {
  score: number;
  windowNotes: number;
  /** Null when nothing matched. */
  passage: Passage | null;
  /** The best match's distinctiveness in [0, 1]; absent when not measured. */
  distinctiveness?: number;
  /** The recent stretch judged by core/stretch.ts `hotStretch`, when one was: hot when it warns on its own; its score and its length's threshold. */
  stretch?: { hot: boolean; passage: Passage; score: number; threshold: number } | null;
}

export interface PolicyState {
  /** The passage warned about, as it has moved on; null when no warning stands. */
  standing: Passage | null;
  /** Hot evaluations in a row (of another passage than the standing one). */
  hot: number;
  /** Cool evaluations in a row while a warning stands. */
  cool: number;
}

/** A raise names the passage; `stretch` is true when a recent stretch raised it and the whole window was not hot. */
export type PolicyAction = { type: 'raise'; passage: Passage; stretch?: boolean } | { type: 'clear'; passage: Passage };

export const initialPolicy = (): PolicyState => ({ standing: null, hot: 0, cool: 0 });

/** Same piece, and the excerpts [start, start + beats) overlap. */
export const samePassage = (a: Passage, b: Passage): boolean =>
  a.piece === b.piece && a.pieceStart < b.pieceStart + b.beats && b.pieceStart < a.pieceStart + a.beats;

export function stepPolicy(s: PolicyState, e: Evaluation, c: PolicyConfig): { state: PolicyState; actions: PolicyAction[] } {
  if (!c.warn) return { state: s, actions: [] };
  const full = e.windowNotes >= c.minNotes;
  const windowHot = full && e.score >= c.threshold && e.passage !== null && (e.distinctiveness ?? 1) >= (c.minDistinctiveness ?? 0);
  const stretchWarns = e.stretch?.hot === true;
  const stretchHot = !windowHot && stretchWarns;
  const isHot = windowHot || stretchHot;
  const passage = (windowHot ? e.passage : e.stretch?.passage) ?? null;
  const held = s.standing !== null && e.stretch != null && samePassage(e.stretch.passage, s.standing) && e.stretch.score >= e.stretch.threshold - c.hysteresis;
  const isCool = !isHot && !held && (!full || e.score < c.threshold - c.hysteresis || e.passage === null);
  const raise: PolicyAction = { type: 'raise', passage: passage!, ...(stretchHot ? { stretch: true } : {}) };
  if (!s.standing) {
    const hot = isHot ? s.hot + 1 : 0;
    if (hot >= c.consecutive || stretchWarns) return { state: { standing: passage, hot: 0, cool: 0 }, actions: [raise] };
    return { state: { ...s, hot }, actions: [] };
  }
  if (isHot && samePassage(passage!, s.standing)) return { state: { standing: passage, hot: 0, cool: 0 }, actions: [] };
  if (isHot) {
    const hot = s.hot + 1;
    if (hot >= c.consecutive || stretchWarns) {
      return { state: { standing: passage, hot: 0, cool: 0 }, actions: [{ type: 'clear', passage: s.standing }, raise] };
    }
    return { state: { ...s, hot, cool: 0 }, actions: [] };
  }
  const cool = isCool ? s.cool + 1 : 0;
  if (cool >= c.consecutive) return { state: initialPolicy(), actions: [{ type: 'clear', passage: s.standing }] };
  return { state: { ...s, hot: 0, cool }, actions: [] };
}

/** A new passage begins: a standing warning clears at once. */
export function resetPolicy(s: PolicyState): { state: PolicyState; actions: PolicyAction[] } {
  return { state: initialPolicy(), actions: s.standing ? [{ type: 'clear', passage: s.standing }] : [] };
}
