/**
 * What a review shows beyond the report's numbers: the worst windows, each
 * with the played excerpt and the corpus excerpt it resembles (every note
 * flagged when the match's translation lands it on a note of the other),
 * and originality folder by folder as a series.
 *
 * @example
 *   const [pair] = worstPairs([{ notes, windows: report.queries[0].windows }], view, 1);
 *   pair.query.filter((n) => n.matched).length   // played notes the corpus excerpt shares
 *   folderSeries(report.queries, ['ckpt-1', 'ckpt-1', 'ckpt-2'], 1)
 *   // → [{ folder: 'ckpt-1', queries: 2, windows: 14, originality: 0.81, ci95: [0.74, 0.88] }, { folder: 'ckpt-2', ... }]
 */
import { type Note, type PitchMode, type Point, comparePoints, toGrains } from './note.js';
import { type PitchLines, firstAtLeast, pitchLines } from './tolerance.js';
import type { CorpusPoints, Piece } from './corpus.js';
import type { GrainSpan } from './flat-notes.js';
import { type Meter, type TimeSignature, normalMeter } from './bars.js';
import { type MatchSummary, type QueryReport, type WindowResult, judgedScores, originalityCi, originalityOf } from './report.js';

/** How many worst windows a review shows when not told otherwise. */
export const DEFAULT_WORST = 3;

/**
 * Onsets snapped to 1/`grid` beat (0 = as played), as the live scorer hears
 * them: clock-stamped notes land a few ms off the beat, and exact matching
 * counts only coinciding points, so a review must snap as the session did.
 */
export function snapOnsets<N extends Note>(notes: readonly N[], grid: number): N[] {
  if (!(Number.isInteger(grid) && grid >= 0)) throw new RangeError(`grid must be a whole number of divisions per beat (0 = off), got ${grid}`);
  return grid === 0 ? [...notes] : notes.map((n) => ({ ...n, onset: Math.round(n.onset * grid) / grid }));
}

/** A note of an excerpt, flagged when the match's translation lands it on a note of the other excerpt. */
export type MarkedNote<N extends Note = Note> = N & { matched: boolean };

export interface ExcerptPair<N extends Note = Note> {
  /** 1 for the worst window. */
  rank: number;
  /** Which of the scored queries the window belongs to. */
  queryIndex: number;
  window: MatchedWindow;
  /** The query's (or session's) notes with onset in the window, at their own onsets. */
  query: MarkedNote<N>[];
  /** The piece's notes with onset in the matched excerpt, at their own onsets in the piece. */
  corpus: MarkedNote<Note>[];
  /** The bars each side counts in: the query's (or session's) metre and the piece's. */
  queryMeter: TimeSignature[];
  pieceMeter: TimeSignature[];
}

/** A window that found a match in the corpus. */
export type MatchedWindow = WindowResult & { match: MatchSummary };

const overlaps = (a: WindowResult, b: WindowResult): boolean => a.start < b.end && b.start < a.end;

/**
 * The `n` highest-scoring windows that found a match, worst first. Windows
 * overlap (a hop shorter than the window), so one quoted passage would fill
 * every slot: a window overlapping one already picked is passed over.
 */
export function worstWindows(windows: readonly WindowResult[], n: number): MatchedWindow[] {
  const ranked = windows
    .filter((w): w is MatchedWindow => w.match !== null && w.score > 0)
    .sort((a, b) => b.score - a.score || b.match.matched - a.match.matched || a.start - b.start);
  const picked: MatchedWindow[] = [];
  for (const w of ranked) {
    if (picked.length >= n) break;
    if (!picked.some((p) => overlaps(p, w))) picked.push(w);
  }
  return picked;
}

const pitchIn = (n: Note, mode: PitchMode): number => (mode === 'morphetic' ? n.morph : n.pitch);

/** Index of the first of `notes` (sorted by onset) with onset at or after `grains`. */
function firstFrom(notes: readonly Note[], grains: number): number {
  let lo = 0;
  let hi = notes.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (toGrains(notes[mid].onset) < grains) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

function inSpan<N extends Note>(notes: readonly N[], from: number, to: number): N[] {
  return notes.filter((n) => {
    const at = toGrains(n.onset);
    return at >= from && at < to;
  });
}

/**
 * The notes of a piece (sorted by onset) whose ontime lies in a span, found
 * by search rather than by reading them all.
 *
 * @example
 *   notesWithin(piece.notes, { fromGrains: toGrains(8), toGrains: toGrains(24) })   // → the notes of beats 8 to 24 (counted from 0)
 */
export const notesWithin = (notes: readonly Note[], span: GrainSpan): Note[] => notes.slice(firstFrom(notes, span.fromGrains), firstFrom(notes, span.toGrains));

/**
 * The span of the matched piece a window's excerpt shows: from the match's
 * start, as long as the window over the match's time scale.
 *
 * @example
 *   excerptSpan({ start: 0, end: 16, match: { pieceStart: 8, timeScale: 2, ... }, ... })
 *   // → { fromGrains: toGrains(8), toGrains: toGrains(16) }
 */
export function excerptSpan(window: Pick<MatchedWindow, 'start' | 'end' | 'match'>): GrainSpan {
  const fromGrains = toGrains(window.match.pieceStart);
  return { fromGrains, toGrains: fromGrains + Math.round((toGrains(window.end) - toGrains(window.start)) / (window.match.timeScale ?? 1)) };
}

/** The notes of a matched window's two excerpts, and which of each the match lands on the other (`excerptMarks`). */
export interface ExcerptMarks<N extends Note> {
  query: readonly N[];
  corpus: readonly Note[];
  queryMatched: boolean[];
  corpusMatched: boolean[];
}

/**
 * The two excerpts of a matched window, each note flagged when the match's
 * translation (and, for a tempo-free match, its time scale) lands it on a
 * note of the other excerpt of the same pitch in `mode`, within `tolerance`
 * beats; with no tolerance that is exactly the `match.matched` coinciding
 * points. `notes` must be the notes the window was scored from (spelled,
 * for morphetic pitch). `piece` needs only notes sorted by onset that
 * cover `excerptSpan(window)`: the whole piece's, or just those. The flags
 * come apart from the notes, so a caller after a few fields (the live
 * verdict, once a note) copies no note whole.
 *
 * @example
 *   const m = excerptMarks(windowNotes, window, piece, 'chromatic', 0.1);
 *   m.corpus.filter((_, i) => m.corpusMatched[i]).length   // → window.match.matched, or near it within a tolerance
 */
export function excerptMarks<N extends Note>(notes: readonly N[], window: MatchedWindow, piece: Pick<Piece, 'notes'>, mode: PitchMode, tolerance = 0): ExcerptMarks<N> {
  const from = toGrains(window.start);
  const width = toGrains(window.end) - from;
  const scale = window.match.timeScale ?? 1;
  const pieceFrom = toGrains(window.match.pieceStart);
  const slack = toGrains(tolerance);
  const query = inSpan(notes, from, from + width);
  const corpus = notesWithin(piece.notes, excerptSpan(window));
  // Both sides on the query's axes: time in grains from the query's start, pitch as played.
  const queryAt = query.map((q) => ({ at: toGrains(q.onset), pitch: pitchIn(q, mode) }));
  const corpusAt = corpus.map((c) => ({ at: from + (toGrains(c.onset) - pieceFrom) * scale, pitch: pitchIn(c, mode) + window.match.transposition }));
  // Pitch lines want points in order; the query's notes (a session's, in arrival order) may not be.
  const queryLines = pitchLines([...queryAt].sort(comparePoints));
  const corpusLines = pitchLines(corpusAt);
  return { query, corpus, queryMatched: queryAt.map((q) => within(corpusLines, q, slack)), corpusMatched: corpusAt.map((c) => within(queryLines, c, slack)) };
}

/** `excerptMarks` as notes carrying their flags: the form the reports' piano rolls draw. */
export function excerptPair<N extends Note>(notes: readonly N[], window: MatchedWindow, piece: Piece, mode: PitchMode, tolerance = 0): { query: MarkedNote<N>[]; corpus: MarkedNote<Note>[] } {
  const m = excerptMarks(notes, window, piece, mode, tolerance);
  return {
    query: m.query.map((q, i) => ({ ...q, matched: m.queryMatched[i] })),
    corpus: m.corpus.map((c, i) => ({ ...c, matched: m.corpusMatched[i] })),
  };
}

/** Whether a line of `p`'s pitch holds an onset within ± `slack` of it. */
function within(lines: PitchLines, p: Point, slack: number): boolean {
  const line = lines.get(p.pitch);
  if (!line) return false;
  const i = firstAtLeast(line, p.at - slack);
  return i < line.length && line[i] <= p.at + slack;
}

export interface Scored<N extends Note> {
  /** The notes the windows were scored from (spelled, for morphetic pitch). */
  notes: readonly N[];
  windows: readonly WindowResult[];
  /** Its time signatures; absent counts as 4/4. */
  meter?: Meter;
}

/**
 * The `n` worst windows across queries (or of one session), each with its
 * two excerpts, worst first; `corpus` is the view they were scored against.
 * Within a query no two picked windows overlap.
 */
export function worstPairs<N extends Note>(queries: readonly Scored<N>[], corpus: CorpusPoints, n: number, tolerance = 0): ExcerptPair<N>[] {
  const picked = queries
    .flatMap((q, queryIndex) => worstWindows(q.windows, n).map((window) => ({ queryIndex, window })))
    .sort((a, b) => b.window.score - a.window.score || b.window.match.matched - a.window.match.matched || a.queryIndex - b.queryIndex || a.window.start - b.window.start)
    .slice(0, n);
  return picked.map(({ queryIndex, window }, i) => {
    const piece = corpus.pieces.find((p) => p.path === window.match.piece);
    if (!piece) throw new RangeError(`window at beat ${window.start} matched "${window.match.piece}", which is not in the corpus it was scored against`);
    const meters = { queryMeter: normalMeter(queries[queryIndex].meter ?? []), pieceMeter: normalMeter(piece.meter ?? []) };
    return { rank: i + 1, queryIndex, window, ...meters, ...excerptPair(queries[queryIndex].notes, window, piece, corpus.mode, tolerance) };
  });
}

export interface SeriesPoint {
  folder: string;
  queries: number;
  windows: number;
  originality: number | null;
  /** Bootstrap interval over the folder's queries; null with fewer than two that hold windows. */
  ci95: [number, number] | null;
}

/**
 * Originality per folder, in the order the folders first appear (the order
 * they were named, say one per checkpoint). `folders[i]` is the folder of
 * `queries[i]`; queries named as single files (null) belong to no folder.
 */
export function folderSeries(queries: readonly QueryReport[], folders: readonly (string | null)[], seed: number): SeriesPoint[] {
  if (folders.length !== queries.length) throw new RangeError(`folderSeries: ${queries.length} queries but ${folders.length} folders`);
  const groups = new Map<string, QueryReport[]>();
  queries.forEach((q, i) => {
    const f = folders[i];
    if (f !== null) groups.set(f, [...(groups.get(f) ?? []), q]);
  });
  return [...groups].map(([folder, qs]) => {
    const scores = qs.map((q) => judgedScores(q.windows));
    return { folder, queries: qs.length, windows: scores.flat().length, originality: originalityOf(scores.flat()), ci95: originalityCi(scores, seed) };
  });
}
