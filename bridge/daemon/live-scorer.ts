/**
 * The scorer the worker thread runs: notes in, one verdict per evaluation.
 * This is the one place that decides *how* a live window is matched; the
 * worker, the coalescing and everything downstream only see `LiveScorer`.
 *
 * Now: the rolling window (core/live-window.ts) rescored from scratch each
 * evaluation by the preset's matching mode over the corpus's points
 * (core/match-mode.ts: exact, or within a tolerance for played timing,
 * each match with its distinctiveness). The window
 * holds (newest − W, newest] and is matched from its first note; the corpus
 * index's streaming matcher can keep the same window (add each point, then
 * expire to `startGrains`), so swapping it in changes this file only.
 *
 * Onsets snap to a grid of 1/`grid` beat before matching (0 = as played):
 * a note stamped from a clock lands a few ms off the beat, and exact
 * matching counts only coinciding points.
 *
 * @example
 *   const scorer = exactLiveScorer(corpus, { windowBeats: 16, grid: 12 });
 *   scorer.add({ seq: 1, onset: 0, duration: 1, pitch: 60, velocity: 90, channel: 1 });
 *   scorer.evaluate()   // → { seq: 1, windowNotes: 1, windowStart: 0, windowEnd: 16, match: {...} | null, excerpt: [...], ... }
 */
import { type Note, GRAINS_PER_BEAT, toPoints } from '../../core/note.js';
import { type Corpus, corpusPoints, pieceName } from '../../core/corpus.js';
import { modeMatcher } from '../../core/match-mode.js';
import { LiveWindow } from '../../core/live-window.js';
import { excerptPair, snapOnsets } from '../../core/review.js';
import type { ExcerptNote, NoteEvent } from '../events.js';

/** A played note as the scorer gets it (the `note` event's fields): seq numbers start at 1 each session. */
export type LiveNote = Omit<NoteEvent, 'type'>;

export interface LiveMatch {
  /** Path of the piece in the corpus, and the name a person knows it by. */
  piece: string;
  title: string;
  pieceIndex: number;
  pieceStart: number;
  transposition: number;
  matched: number;
  excerptNotes: number;
  /** 1 when the matched material is found in one corpus place only (core/distinctiveness.ts). */
  distinctiveness: number;
}

export interface LiveVerdict {
  /** Seq of the last note this evaluation includes. */
  seq: number;
  score: number;
  windowNotes: number;
  windowStart: number;
  windowEnd: number;
  match: LiveMatch | null;
  /** Played onset = corpus onset + timeShift. */
  timeShift: number | null;
  excerpt: ExcerptNote[] | null;
  /** Running totals: notes the window let go early (full), and restarts (the sender's clock went back). */
  dropped: number;
  restarts: number;
}

export interface LiveScorer {
  add(note: LiveNote): void;
  /** Empties the window: a new passage. */
  reset(): void;
  evaluate(): LiveVerdict;
}

export interface LiveScorerOptions {
  windowBeats: number;
  /** Divisions per beat onsets snap to; 0 = as played. */
  grid: number;
  /** Beats a played onset may stray from the corpus's and still match (core/tolerance.ts); absent = 0, exact. */
  tolerance?: number;
}

/** Most notes in the live window: a bound on one evaluation's work whatever a sender floods in. */
export const MAX_WINDOW_NOTES = 1024;
/** Most corpus notes sent with a verdict for the piano roll. */
export const MAX_EXCERPT_NOTES = 512;

export function exactLiveScorer(corpus: Corpus, options: LiveScorerOptions): LiveScorer {
  const view = corpusPoints(corpus, 'chromatic');
  const matcher = modeMatcher(view, options.windowBeats, { tolerance: options.tolerance ?? 0, tempoFree: false });
  const window = new LiveWindow<Note & { seq: number }>({ beats: options.windowBeats, maxNotes: MAX_WINDOW_NOTES });
  let lastSeq = 0;
  return {
    add(n) {
      lastSeq = n.seq;
      window.add(snapOnsets([{ seq: n.seq, onset: n.onset, duration: n.duration, pitch: n.pitch, morph: n.pitch, velocity: n.velocity, channel: n.channel }], options.grid)[0]);
    },
    reset: () => window.clear(),
    evaluate() {
      const notes = window.notes;
      const points = toPoints(notes, 'chromatic');
      const startGrains = window.startGrains;
      const windowStart = startGrains / GRAINS_PER_BEAT;
      const windowEnd = windowStart + options.windowBeats;
      const m = matcher.best(points, startGrains);
      const base = { seq: lastSeq, windowNotes: points.length, windowStart, windowEnd, dropped: window.dropped, restarts: window.restarts };
      if (!m || m.matched === 0) return { ...base, score: 0, match: null, timeShift: null, excerpt: null };
      const piece = corpus.pieces[m.piece];
      const match: LiveMatch = {
        piece: piece.path,
        title: pieceName(piece),
        pieceIndex: m.piece,
        pieceStart: m.pieceStart,
        transposition: m.transposition,
        matched: m.matched,
        excerptNotes: m.excerptNotes,
        distinctiveness: m.distinctiveness!,
      };
      const summary = { ...match, score: m.score };
      const { corpus: excerpt } = excerptPair(notes, { start: windowStart, end: windowEnd, notes: points.length, score: m.score, match: summary }, piece, 'chromatic', options.tolerance ?? 0);
      return {
        ...base,
        score: m.score,
        match,
        timeShift: windowStart - m.pieceStart,
        excerpt: excerpt.slice(0, MAX_EXCERPT_NOTES).map((n) => ({ onset: n.onset, duration: n.duration, pitch: n.pitch, matched: n.matched })),
      };
    },
  };
}
