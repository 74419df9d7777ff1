/**
 * The scorer the worker thread runs: notes in, one verdict per evaluation.
 * This is the one place that decides *how* a live window is matched; the
 * worker, the coalescing and everything downstream only see `LiveScorer`.
 *
 * The rolling window (core/live-window.ts) says which notes are in play:
 * (newest − W, newest], matched from its first note. Each note joins the
 * corpus index's streaming matcher as it arrives (core/live-match.ts), so
 * an evaluation costs the new notes' postings and the verification of a few
 * candidates — not a rescore against the whole corpus — whether the match is
 * exact or within the preset's tolerance, and the match's distinctiveness
 * is counted through the index as well.
 *
 * Onsets snap to a grid of 1/`grid` beat before matching (0 = as played):
 * a note stamped from a clock lands a few ms off the beat, and exact
 * matching counts only coinciding points.
 *
 * @example
 *   const scorer = liveScorer(corpus, { windowBeats: 16, grid: 12, tolerance: 0.1 });
 *   scorer.add({ seq: 1, onset: 0, duration: 1, pitch: 60, velocity: 90, channel: 1 });
 *   scorer.evaluate()   // → { seq: 1, windowNotes: 1, windowStart: 0, windowEnd: 16, match: {...} | null, excerpt: [...], ... }
 */
import { type Note, type Point, GRAINS_PER_BEAT, toGrains, toPoints } from '../../core/note.js';
import { type Corpus, corpusPoints, pieceName } from '../../core/corpus.js';
import { type CorpusIndex, buildTriples, corpusIndex, flattenPoints } from '../../core/triple-index.js';
import { buildFingerprints } from '../../core/fingerprint.js';
import type { MatchCorpus } from '../../core/pipeline.js';
import { LIVE_TABLE_BITS, LiveMatcher } from '../../core/live-match.js';
import { LiveWindow } from '../../core/live-window.js';
import { excerptMarks, excerptSpan, notesWithin, snapOnsets } from '../../core/review.js';
import type { GrainSpan } from '../../core/flat-notes.js';
import type { OpenedCorpus } from '../corpus/open-corpus.js';
import { type StretchMatch, type StretchRule, hotStretch, nearestStretch, thresholdOf } from '../../core/stretch.js';
import type { StretchSummary } from '../../core/session-state.js';
import type { WindowMatch } from '../../core/match.js';
import { barFields } from '../../core/bars.js';
import type { ExcerptNote, NoteEvent } from '../../contract/events.js';

/** A played note as the scorer gets it (the `note` event's fields): seq numbers start at 1 each session. */
export type LiveNote = Omit<NoteEvent, 'type'>;

export interface LiveMatch {
  /** Path of the piece in the corpus, and the name a person knows it by. */
  piece: string;
  title: string;
  pieceIndex: number;
  pieceStart: number;
  /** pieceStart as bar and beat in the piece's metre (core/bars.ts); null before the piece begins. */
  pieceBar: number | null;
  pieceBeatInBar: number | null;
  transposition: number;
  /** The played passage's length over the corpus's: 1 unless a tempo-free match found another tempo. */
  timeScale: number;
  matched: number;
  excerptNotes: number;
  /** 1 when the matched material is found in one corpus place only (core/distinctiveness.ts). */
  distinctiveness: number;
}

/** The recent stretch judged (core/stretch.ts): `hot` when it warns on its own; distinctiveness is counted only for a stretch that reaches its threshold. */
export type LiveStretch = StretchSummary & { hot: boolean; match: Omit<LiveMatch, 'distinctiveness'> & { distinctiveness?: number } };

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
  /** The recent stretch judged, when the preset warns early and one matched. */
  stretch: LiveStretch | null;
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
  /** Also find passages played at 0.5–2 times the corpus tempo (core/fingerprint.ts); absent = false. */
  tempoFree?: boolean;
  /** Recent stretches judged on each evaluation (core/stretch.ts); absent or no lengths = the whole window only. */
  early?: StretchRule;
}

/** Most notes in the live window: a bound on one evaluation's work whatever a sender floods in. */
export const MAX_WINDOW_NOTES = 1024;
/** Most corpus notes sent with a verdict for the piano roll. */
export const MAX_EXCERPT_NOTES = 512;

/** What live matching reads of a corpus in memory: its chromatic points, triple index and fingerprint table. */
export function liveCorpus(corpus: Corpus): MatchCorpus & { index: CorpusIndex } {
  const flat = flattenPoints(corpusPoints(corpus, 'chromatic'));
  const table = buildFingerprints(flat);
  return { flat, index: corpusIndex(buildTriples(flat)), fingerprints: () => table };
}

/**
 * What live matching reads of a corpus: its points, triple index and
 * fingerprint table, and where a verdict's excerpt comes from — a piece's
 * notes a span at a time (`OpenedCorpus.notesIn`), or when not given the
 * piece's own notes. Read a span at a time, a long session over a large
 * index keeps no piece's notes: made whole, every piece a performer's
 * playing ever matched would stay in the worker's heap.
 */
export type LiveMatching = MatchCorpus & { index: CorpusIndex; notesIn?: OpenedCorpus['notesIn'] };

/**
 * The live scorer over a corpus and what matching reads of it (built here
 * when not given: `openCorpus(...).matchCorpus('chromatic')` with the
 * opened corpus's `notesIn` is the daemon's).
 */
export function liveScorer(corpus: Corpus, options: LiveScorerOptions, matching: LiveMatching = liveCorpus(corpus)): LiveScorer {
  const notesIn = matching.notesIn ?? ((piece: number, span: GrainSpan) => notesWithin(corpus.pieces[piece].notes, span));
  const live = new LiveMatcher(matching, { windowBeats: options.windowBeats, mode: { tolerance: options.tolerance ?? 0, tempoFree: options.tempoFree ?? false }, tableBits: LIVE_TABLE_BITS });
  const window = new LiveWindow<Note & { seq: number }>({ beats: options.windowBeats, maxNotes: MAX_WINDOW_NOTES });
  let lastSeq = 0;
  const early = options.early && options.early.lengths.length ? options.early : null;
  const matchOf = (m: WindowMatch): Omit<LiveMatch, 'distinctiveness'> => {
    const piece = corpus.pieces[m.piece];
    const at = barFields(piece.meter ?? [], m.pieceStart);
    return { piece: piece.path, title: pieceName(piece), pieceIndex: m.piece, pieceStart: m.pieceStart, pieceBar: at.bar, pieceBeatInBar: at.beatInBar, transposition: m.transposition, timeScale: m.timeScale ?? 1, matched: m.matched, excerptNotes: m.excerptNotes };
  };
  const judged = (rule: StretchRule, points: ReturnType<typeof toPoints>, startGrains: number): LiveStretch | null => {
    const stretches = live.stretches({ points, startGrains }, rule.lengths);
    const hot = hotStretch(stretches, rule, (s) => live.stretchDistinctiveness(points, s));
    const s: StretchMatch | null = hot?.stretch ?? nearestStretch(stretches, rule);
    if (!s?.match) return null;
    const beats = (g: number): number => g / GRAINS_PER_BEAT;
    return {
      startBeat: beats(s.startGrains), endBeat: beats(s.endGrains), notes: s.notes, beats: s.beats, threshold: thresholdOf(rule, s.beats), score: s.score,
      hot: hot !== null, match: { ...matchOf(s.match), ...(hot ? { distinctiveness: hot.distinctiveness } : {}) },
    };
  };
  return {
    add(n) {
      lastSeq = n.seq;
      const note = snapOnsets([{ seq: n.seq, onset: n.onset, duration: n.duration, pitch: n.pitch, morph: n.pitch, velocity: n.velocity, channel: n.channel }], options.grid)[0];
      const restarts = window.restarts;
      window.add(note);
      if (window.restarts !== restarts) live.reset();
      live.add({ at: toGrains(note.onset), pitch: note.pitch });
      live.expire(window.startGrains);
    },
    reset() {
      window.clear();
      live.reset();
    },
    evaluate() {
      const notes = window.notes;
      const points = toPoints(notes, 'chromatic');
      const startGrains = window.startGrains;
      const windowStart = startGrains / GRAINS_PER_BEAT;
      const windowEnd = windowStart + options.windowBeats;
      const m = live.best({ points, startGrains });
      const stretch = early && points.length ? judged(early, points, startGrains) : null;
      const base = { seq: lastSeq, windowNotes: points.length, windowStart, windowEnd, stretch, dropped: window.dropped, restarts: window.restarts };
      if (!m || m.matched === 0) return { ...base, score: 0, match: null, timeShift: null, excerpt: null };
      const match: LiveMatch = { ...matchOf(m), distinctiveness: m.distinctiveness! };
      const summary = { ...match, bar: match.pieceBar, beatInBar: match.pieceBeatInBar, score: m.score };
      const matched = { start: windowStart, end: windowEnd, bar: null, beatInBar: null, notes: points.length, score: m.score, tooShort: false, match: summary };
      const marks = excerptMarks(notes, matched, { notes: notesIn(m.piece, excerptSpan(matched)) }, 'chromatic', options.tolerance ?? 0);
      const excerpt: ExcerptNote[] = [];
      for (let i = 0; i < Math.min(marks.corpus.length, MAX_EXCERPT_NOTES); i++) {
        const n = marks.corpus[i];
        excerpt.push({ onset: n.onset, duration: n.duration, pitch: n.pitch, matched: marks.corpusMatched[i] });
      }
      return { ...base, score: m.score, match, timeShift: windowStart - m.pieceStart, excerpt };
    },
  };
}

/**
 * The warm-up, a note at a time: plays the warm-up passages
 * (core/live-match.ts `warmUpPassages`) through the whole verdict — votes,
 * stretches, distinctiveness, the excerpt — yielding the notes played so
 * far after each, and empties the window when it ends or is stopped early
 * (`return()`). The first notes a performer plays are then scored by
 * compiled code with tables at their working size, as later ones are. The
 * scoring worker steps through it while it waits for the first note, and
 * stops at that note.
 *
 * @example
 *   const steps = warmingUp(scorer, warmUpPassages(matching.flat));
 *   steps.next()     // → { value: 1, done: false }
 *   steps.return()   // stopped: the window is empty again
 */
export function* warmingUp(scorer: LiveScorer, passages: Point[][]): Generator<number, void> {
  let played = 0;
  try {
    for (const passage of passages) {
      scorer.reset();
      for (const [i, p] of passage.entries()) {
        scorer.add({ seq: i + 1, onset: p.at / GRAINS_PER_BEAT, duration: 0.5, pitch: p.pitch, velocity: 90, channel: 1 });
        scorer.evaluate();
        yield ++played;
      }
    }
  } finally {
    scorer.reset();
  }
}
