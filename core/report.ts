/**
 * The originality report and the human baseline.
 *
 * A query is cut into windows; each window takes its best score against the
 * corpus; originality = 1 − the mean window score. A window holding fewer
 * than `minNotes` notes (a query's last window often holds a note or two,
 * and any two notes match somewhere) is listed, marked `tooShort`, and left
 * out of the mean, the interval and the gate. The human baseline is the
 * same analysis of sampled corpus pieces against the rest of the corpus, the
 * yardstick for how much the corpus's own composers borrow from each other.
 *
 * @example
 *   const matcher = windowMatcher(corpus, { windowBeats: 16, mode: EXACT_MODE, candidates: 'index' });
 *   originalityReport([{ file: 'take1.mid', notes }], view, matcher, { window: 16, hop: 8, minNotes: 8 })
 *   // → { originality: 0.82, ci95: null, queries: [{ file: 'take1.mid', originality: 0.82, windows: [...] }], ... }
 */
import { type Note, type PitchMode, type Point, toGrains, toPoints } from './note.js';
import { type CorpusPoints, pieceName } from './corpus.js';
import type { WindowMatcher } from './match.js';
import { type WindowShape, windows } from './windows.js';
import { type Meter, type TimeSignature, barFields, normalMeter } from './bars.js';
import { bootstrapMeanCi, mean, percentile, sampleIndices, seededRandom } from './stats.js';

export const CAUTION =
  "A similarity score is evidence for a musician's judgement, not a legal finding. " +
  'It does not decide whether anything infringes a right; for that, seek qualified legal advice under the law where you live.';

export interface MatchSummary {
  /** Path of the piece, relative to the corpus folder. */
  piece: string;
  /** The piece's title, or its file name. */
  title: string;
  pieceStart: number;
  /** pieceStart as bar and beat in the piece's metre (core/bars.ts); null when it falls before the piece begins. */
  bar: number | null;
  beatInBar: number | null;
  transposition: number;
  matched: number;
  excerptNotes: number;
  /** Played / corpus duration, when matched tempo-free (1.5 = slower). */
  timeScale?: number;
  /** 1 = the matched material is found in one corpus place only (core/distinctiveness.ts). */
  distinctiveness?: number;
}

export interface WindowResult {
  start: number;
  end: number;
  /** start as bar and beat in the query's metre (core/bars.ts). */
  bar: number | null;
  beatInBar: number | null;
  notes: number;
  score: number;
  /** Fewer notes than the report's minNotes: listed, but left out of originality, its interval and the gate. */
  tooShort: boolean;
  match: MatchSummary | null;
}

/**
 * Windows with fewer notes than this are too short to judge, in a batch
 * report, baseline, review or gate unless told otherwise. In the human
 * baselines of the demo corpus and of the chorales, 16-beat windows this
 * sparse are the ends of pieces, a small share of all windows, and they
 * score about twice what the rest do: any few notes match somewhere. A
 * higher bar would also drop a slow melody (eight half notes fill 16 beats).
 * 8 is also where the index stops voting and scans (SCAN_POINTS).
 */
export const DEFAULT_MIN_NOTES = 8;

/** Throws unless `minNotes` is a whole number ≥ 1. */
export function checkMinNotes(minNotes: number): void {
  if (!(Number.isInteger(minNotes) && minNotes >= 1)) throw new RangeError(`minNotes must be a whole number of at least 1, got ${minNotes}`);
}

/** The scores of the windows long enough to judge. */
export const judgedScores = (windows: readonly WindowResult[]): number[] => windows.filter((w) => !w.tooShort).map((w) => w.score);

export interface QueryInput {
  file: string;
  notes: Note[];
  /** Its time signatures; absent counts as 4/4. */
  meter?: Meter;
}

export interface QueryReport {
  file: string;
  notes: number;
  /** Its time signatures, 4/4 filled in (core/bars.ts): the bars its positions are counted in. */
  meter: TimeSignature[];
  /** Null for a query with no notes. */
  originality: number | null;
  windows: WindowResult[];
}

export interface ReportSettings extends WindowShape {
  pitch: PitchMode;
  seed: number;
  /** Windows with fewer notes are too short to judge. */
  minNotes: number;
}

export interface OriginalityReport {
  originality: number | null;
  ci95: [number, number] | null;
  /** Windows judged (long enough), across queries. */
  windows: number;
  /** Windows listed but too short to judge. */
  tooShort: number;
  queries: QueryReport[];
  settings: ReportSettings;
  caution: string;
}

export interface Progress {
  (done: number, total: number): void;
}

/** Scores every window of a point set in `meter` (4/4 when absent). `exclude` leaves one corpus piece out. */
export function scoreWindows(points: readonly Point[], corpus: CorpusPoints, matcher: WindowMatcher, shape: WindowShape & { minNotes: number; meter?: Meter }, exclude?: number): WindowResult[] {
  checkMinNotes(shape.minNotes);
  return windows(points, shape).map((w) => {
    const m = matcher.best({ points: w.points, startGrains: toGrains(w.start), exclude });
    return {
      start: w.start,
      end: w.end,
      ...barFields(shape.meter ?? [], w.start),
      notes: w.points.length,
      score: m ? m.score : 0,
      tooShort: w.points.length < shape.minNotes,
      match: m && m.matched > 0 ? {
        piece: corpus.pieces[m.piece].path,
        title: pieceName(corpus.pieces[m.piece]),
        pieceStart: m.pieceStart,
        ...barFields(corpus.pieces[m.piece].meter ?? [], m.pieceStart),
        transposition: m.transposition,
        matched: m.matched,
        excerptNotes: m.excerptNotes,
        ...(m.timeScale === undefined ? {} : { timeScale: m.timeScale }),
        ...(m.distinctiveness === undefined ? {} : { distinctiveness: m.distinctiveness }),
      } : null,
    };
  });
}

/** 1 − the mean window score; null when there are no windows. */
export const originalityOf = (scores: readonly number[]): number | null => (scores.length ? 1 - mean(scores) : null);

/** Interval of originality from the bootstrap interval of mean window scores. */
export function originalityCi(groups: number[][], seed: number): [number, number] | null {
  const ci = bootstrapMeanCi(groups, seededRandom(seed));
  return ci ? [1 - ci[1], 1 - ci[0]] : null;
}

export function originalityReport(
  queries: readonly QueryInput[],
  corpus: CorpusPoints,
  matcher: WindowMatcher,
  settings: WindowShape & { seed?: number; minNotes?: number },
  progress?: Progress,
): OriginalityReport {
  const seed = settings.seed ?? 1;
  const shape = { window: settings.window, hop: settings.hop, minNotes: settings.minNotes ?? DEFAULT_MIN_NOTES };
  const reports = queries.map((q, i) => {
    const windowsOf = scoreWindows(toPoints(q.notes, corpus.mode), corpus, matcher, { ...shape, meter: q.meter });
    progress?.(i + 1, queries.length);
    return { file: q.file, notes: q.notes.length, meter: normalMeter(q.meter ?? []), originality: originalityOf(judgedScores(windowsOf)), windows: windowsOf };
  });
  const groups = reports.map((r) => judgedScores(r.windows));
  return {
    originality: originalityOf(groups.flat()),
    ci95: originalityCi(groups, seed),
    windows: groups.flat().length,
    tooShort: reports.reduce((n, r) => n + r.windows.filter((w) => w.tooShort).length, 0),
    queries: reports,
    settings: { window: shape.window, hop: shape.hop, pitch: corpus.mode, seed, minNotes: shape.minNotes },
    caution: CAUTION,
  };
}

export interface Percentiles {
  p50: number;
  p90: number;
  p95: number;
  p99: number;
}

export interface Baseline {
  originality: number | null;
  ci95: [number, number] | null;
  /** Paths of the sampled pieces. */
  samples: string[];
  windows: number;
  percentiles: Percentiles;
  settings: ReportSettings;
  caution: string;
}

export interface BaselineOptions extends WindowShape {
  samples: number;
  seed: number;
  minNotes?: number;
}

/** Each sampled piece's windows scored against the corpus with the piece itself left out. */
export function humanBaseline(corpus: CorpusPoints, matcher: WindowMatcher, options: BaselineOptions, progress?: Progress): Baseline {
  if (corpus.pieces.length < 2) throw new RangeError(`a baseline needs at least 2 corpus pieces, the corpus has ${corpus.pieces.length}`);
  if (!(Number.isInteger(options.samples) && options.samples > 0)) throw new RangeError(`samples must be a positive whole number, got ${options.samples}`);
  const shape = { window: options.window, hop: options.hop, minNotes: options.minNotes ?? DEFAULT_MIN_NOTES };
  const picked = sampleIndices(corpus.pieces.length, options.samples, seededRandom(options.seed));
  const groups = picked.map((piece, i) => {
    const scores = judgedScores(scoreWindows(corpus.points[piece], corpus, matcher, { ...shape, meter: corpus.pieces[piece].meter }, piece));
    progress?.(i + 1, picked.length);
    return scores;
  });
  const all = groups.flat().sort((a, b) => a - b);
  return {
    originality: originalityOf(all),
    ci95: originalityCi(groups, options.seed),
    samples: picked.map((i) => corpus.pieces[i].path),
    windows: all.length,
    percentiles: { p50: percentile(all, 50), p90: percentile(all, 90), p95: percentile(all, 95), p99: percentile(all, 99) },
    settings: { window: shape.window, hop: shape.hop, pitch: corpus.mode, seed: options.seed, minNotes: shape.minNotes },
    caution: CAUTION,
  };
}
