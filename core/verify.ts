/**
 * The verifier of the matching pipeline (core/pipeline.ts): it scores a
 * candidate translation on the corpus's own points, exactly or within a
 * tolerance, so that whatever proposed the candidate, a score is the score
 * of a real translation. It also runs the reference search, every
 * translation of a piece, that every faster candidate source is measured
 * against.
 *
 * Exact: a candidate (piece, shift, dp) scores the points of the window that
 * land on corpus points. Within a tolerance (core/tolerance.ts): the search
 * looks at shifts within `within` grains of the candidate's and matches one
 * to one, each corpus point with a window point of the same pitch within ±
 * tolerance of it; it reads only the corpus points the excerpt can reach.
 *
 * @example
 *   const v = verifier(flatPoints, 0.1);
 *   v.near({ points: window, startGrains: 0, spanGrains: toGrains(16) }, { piece: 3, shift: -7680, dp: 5, within: 480 })
 *   // → { piece: 3, pieceStart: 2, transposition: 5, matched: 22, excerptNotes: 24, score: 0.917 }
 */
import { type Point, GRAINS_PER_BEAT, toGrains } from './note.js';
import { keyTranslation, translationKey } from './cardinality.js';
import { type WindowMatch, better, betterMatch } from './match.js';
import { type FlatPoints, lowerBoundAt } from './triple-index.js';
import { type LineLookup, type PitchLines, bestInPiece, checkTolerance, pitchLines } from './tolerance.js';

/** The points a verifier scores: a window, or a window rescaled to the corpus's tempo. */
export interface Span {
  /** Sorted points. */
  points: readonly Point[];
  startGrains: number;
  /** Length in grains of the corpus excerpt the span covers (the window's, over the time scale). */
  spanGrains: number;
}

/** A translation to verify: `shift` grains and `dp` steps from the corpus piece to the window. */
export interface Candidate {
  piece: number;
  shift: number;
  dp: number;
  /** Within a tolerance: how far from `shift`, in grains, the search may look. Exact verification ignores it. */
  within: number;
}

export interface Verifier {
  /** Beats an onset may stray; 0 = exact. */
  readonly toleranceBeats: number;
  /**
   * The best match at the candidate's translation (within a tolerance: near
   * it), or `incumbent` when none there beats it: a search given the best so
   * far skips what cannot beat it.
   */
  near(span: Span, c: Candidate, incumbent?: WindowMatch | null): WindowMatch | null;
  /**
   * At least the `matched` of `near(span, c)`, cheaply: a caller verifying
   * many candidates can verify the most promising first and stop where no
   * bound is left that could beat the best.
   */
  bound(span: Span, c: Candidate): number;
  /** The best match over every translation of `piece` that can beat `best` (else `best`): the reference search. */
  every(span: Span, piece: number, best: WindowMatch | null): WindowMatch | null;
}

/** The exact score of one translation of a piece, reading its points from the flat arrays. */
export function verifyShift(flat: FlatPoints, span: Span, piece: number, shift: number, dp: number): WindowMatch {
  flat.ensure?.(piece);
  const { at, pitch, offsets } = flat;
  const from = span.startGrains - shift;
  const lo = lowerBoundAt(at, from, offsets[piece], offsets[piece + 1]);
  const hi = lowerBoundAt(at, from + span.spanGrains, lo, offsets[piece + 1]);
  let matched = 0;
  let c = lo;
  for (const w of span.points) {
    const t = w.at - shift;
    const p = w.pitch - dp;
    while (c < hi && (at[c] < t || (at[c] === t && pitch[c] < p))) c++;
    if (c === hi) break;
    if (at[c] === t && pitch[c] === p) matched++;
  }
  const excerptNotes = hi - lo;
  return { piece, pieceStart: from / GRAINS_PER_BEAT, transposition: dp, matched, excerptNotes, score: matched / Math.max(span.points.length, excerptNotes) };
}

/** For every translation t of the piece's points onto the span's, |(piece + t) ∩ span|. */
function pieceCounts(flat: FlatPoints, piece: number, span: Span): Map<number, number> {
  const { at, pitch, offsets } = flat;
  const counts = new Map<number, number>();
  const lo = offsets[piece];
  const hi = offsets[piece + 1];
  for (const q of span.points) {
    for (let c = lo; c < hi; c++) {
      const k = translationKey(q.at - at[c], q.pitch - pitch[c]);
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
  }
  return counts;
}

/**
 * Every translation of a piece, best count first: a translation's score is
 * at most count / |window|, so the scan stops once that falls below the best.
 */
function exactEvery(flat: FlatPoints, span: Span, piece: number, incumbent: WindowMatch | null): WindowMatch | null {
  flat.ensure?.(piece);
  const n = span.points.length;
  const counts = pieceCounts(flat, piece, span);
  let most = 0;
  for (const c of counts.values()) if (c > most) most = c;
  if (incumbent && most / n < incumbent.score) return incumbent;
  const { at, offsets } = flat;
  let best = incumbent;
  for (const [key, matched] of [...counts].sort((x, y) => y[1] - x[1])) {
    if (best && matched / n < best.score) break;
    const t = keyTranslation(key);
    const from = span.startGrains - t.at;
    const lo = lowerBoundAt(at, from, offsets[piece], offsets[piece + 1]);
    const excerptNotes = lowerBoundAt(at, from + span.spanGrains, lo, offsets[piece + 1]) - lo;
    const m: WindowMatch = { piece, pieceStart: from / GRAINS_PER_BEAT, transposition: t.pitch, matched, excerptNotes, score: matched / Math.max(n, excerptNotes) };
    if (betterMatch(m, best)) best = m;
  }
  return best;
}

/**
 * How many points of the span have a point of the piece at their pitch
 * (less dp) within `reach` grains of their ontime (less shift): no
 * translation within `reach` of (shift, dp) matches more of them.
 */
export function reachable(flat: FlatPoints, span: Span, c: Candidate, reach: number): number {
  flat.ensure?.(c.piece);
  const { at, pitch, offsets } = flat;
  const end = offsets[c.piece + 1];
  let n = 0;
  // The first point searches the piece; the rest step on from there, a few points at a time.
  let i = span.points.length ? lowerBoundAt(at, span.points[0].at - c.shift - reach, offsets[c.piece], end) : end;
  for (const q of span.points) {
    const t = q.at - c.shift;
    const p = q.pitch - c.dp;
    while (i < end && at[i] < t - reach) i++;
    for (let j = i; j < end && at[j] <= t + reach; j++) {
      if (pitch[j] === p) {
        n++;
        break;
      }
    }
  }
  return n;
}

/** The indices [lo, hi) of one piece's points with ontime in [from, to) grains. */
function excerptRange(flat: FlatPoints, piece: number, from: number, to: number): [number, number] {
  flat.ensure?.(piece);
  const { at, offsets } = flat;
  const lo = lowerBoundAt(at, from, offsets[piece], offsets[piece + 1]);
  return [lo, lowerBoundAt(at, to, lo, offsets[piece + 1])];
}

/** The pitch lines of one piece's points with ontime in [from, to) grains, read straight off the flat arrays. */
export function excerptLines(flat: FlatPoints, piece: number, from: number, to: number): PitchLines {
  const { at, pitch } = flat;
  const [lo, hi] = excerptRange(flat, piece, from, to);
  const lines: PitchLines = new Map();
  for (let i = lo; i < hi; i++) {
    const line = lines.get(pitch[i]);
    if (line) line.push(at[i]);
    else lines.set(pitch[i], [at[i]]);
  }
  return lines;
}

/**
 * The pitch lines of one excerpt after another, refilled in place: a
 * tolerant verifier reads a fresh excerpt for every candidate, hundreds a
 * live note, and lets go of it before it returns, so the lines' arrays are
 * kept rather than left as garbage for the next note to wait on.
 *
 * @example
 *   const scratch = new ExcerptLineScratch();
 *   scratch.refill(flat, 3, 0, toGrains(16)).get(62)   // → [0, 1920, 7680]: the ontimes of pitch 62, as excerptLines gives them
 */
export class ExcerptLineScratch implements LineLookup {
  private readonly byPitch = new Map<number, { filled: number; line: number[]; n: number }>();
  /** The lines of the excerpt being filled, `touched[0 … touchedCount)`. */
  private readonly touched: { line: number[]; n: number }[] = [];
  private filled = 0;

  /** Holds the lines `excerptLines(flat, piece, from, to)` would make, and no longer the last excerpt's. */
  refill(flat: FlatPoints, piece: number, from: number, to: number): LineLookup {
    const { at, pitch } = flat;
    const [lo, hi] = excerptRange(flat, piece, from, to);
    const filled = ++this.filled;
    let touchedCount = 0;
    for (let i = lo; i < hi; i++) {
      let e = this.byPitch.get(pitch[i]);
      if (!e) this.byPitch.set(pitch[i], (e = { filled: 0, line: [], n: 0 }));
      if (e.filled !== filled) {
        e.filled = filled;
        e.n = 0;
        this.touched[touchedCount++] = e;
      }
      // Written over in place: emptying an array first would let its storage go, to be made again.
      e.line[e.n++] = at[i];
    }
    for (let k = 0; k < touchedCount; k++) this.touched[k].line.length = this.touched[k].n;
    return this;
  }

  get(pitch: number): number[] | undefined {
    const e = this.byPitch.get(pitch);
    return e && e.filled === this.filled ? e.line : undefined;
  }
}

/** A span's own pitch lines, made once however many candidates are verified on it (a span's points are read-only). */
const spanLines = new WeakMap<Span, PitchLines>();
const linesOf = (span: Span): PitchLines => spanLines.get(span) ?? spanLines.set(span, pitchLines(span.points)).get(span)!;

/** The verifier for a corpus's flat points, exact (`toleranceBeats` 0) or within a tolerance. */
export function verifier(flat: FlatPoints, toleranceBeats: number): Verifier {
  checkTolerance(toleranceBeats);
  const tolGrains = toGrains(toleranceBeats);
  if (tolGrains === 0) {
    return {
      toleranceBeats,
      near: (span, c, incumbent = null) => better(verifyShift(flat, span, c.piece, c.shift, c.dp), incumbent),
      bound: (span) => span.points.length,
      every: (span, piece, best) => exactEvery(flat, span, piece, best),
    };
  }
  // Whole pieces' points and lines for the reference search, made the first time it looks in a piece.
  const pieces = new Map<number, PitchLines>();
  const whole = (piece: number): PitchLines => pieces.get(piece) ?? pieces.set(piece, excerptLines(flat, piece, -Infinity, Infinity)).get(piece)!;
  // The excerpt `near` searches, read afresh for each candidate into the same arrays.
  const scratch = new ExcerptLineScratch();
  return {
    toleranceBeats,
    near(span, c, incumbent = null) {
      // A refined shift lies up to two tolerances past the searched ones, and matches a tolerance further.
      const margin = c.within + 3 * tolGrains;
      const from = span.startGrains - c.shift;
      const lines = scratch.refill(flat, c.piece, from - margin, from + span.spanGrains + margin);
      const near = { translation: { at: c.shift, pitch: c.dp }, within: c.within };
      return bestInPiece({ flat, piece: c.piece, lines, window: span.points, windowLines: linesOf(span), startGrains: span.startGrains, spanGrains: span.spanGrains, tolGrains, near }, incumbent);
    },
    // The search's refined shifts lie within two tolerances of those it starts from, and match a tolerance further.
    bound: (span, c) => reachable(flat, span, c, c.within + 3 * tolGrains),
    every: (span, piece, best) => bestInPiece({ flat, piece, lines: whole(piece), window: span.points, windowLines: linesOf(span), startGrains: span.startGrains, spanGrains: span.spanGrains, tolGrains }, best),
  };
}
