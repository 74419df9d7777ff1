/**
 * The one matching pipeline, for every command and the daemon:
 *
 *   candidates ──────────────→ verifier ─────────→ wrappers
 *   every translation          exact, or           distinctiveness
 *   stored triple index        within a tolerance
 *   streaming index (live)
 *   fingerprints (tempo-free)
 *
 * A candidate source proposes translations (core/index-match.ts,
 * core/stream.ts, core/fingerprint.ts, or every translation: the
 * reference); the verifier scores each on the corpus's own points
 * (core/verify.ts); the best is wrapped with its distinctiveness
 * (core/distinctiveness.ts). Batch and live differ only in where candidates
 * come from, so every mode works in both, and since every score is a
 * verified translation's, no source ever scores a window above the
 * reference.
 *
 * @example
 *   const m = windowMatcher({ flat, index }, { windowBeats: 16, mode: { tolerance: 0.1, tempoFree: false }, candidates: 'index' });
 *   m.best({ points: window, startGrains: 0 })
 *   // → { piece: 3, pieceStart: 8, transposition: 5, matched: 22, excerptNotes: 24, score: 0.917, distinctiveness: 1 }
 */
import { toGrains } from './note.js';
import { type MatchWindow, type WindowMatch, type WindowMatcher, better } from './match.js';
import type { CorpusIndex, FlatPoints } from './triple-index.js';
import { type CandidateSource, type FilterSettings, indexCandidates } from './index-match.js';
import { type StoredFingerprints, DEFAULT_FINGERPRINT, fingerprintCandidates } from './fingerprint.js';
import { type Verifier, verifier } from './verify.js';
import { type PieceCount, matchDistinctiveness } from './distinctiveness.js';
import { checkTolerance } from './tolerance.js';

export interface MatchMode {
  /** Beats an onset may stray from the corpus's; 0 = exact. */
  tolerance: number;
  /** Also search tempo ratios 0.5–2 by fingerprinting. */
  tempoFree: boolean;
}

export const EXACT_MODE: MatchMode = { tolerance: 0, tempoFree: false };

/** Where a batch matcher's candidates come from: every translation (the reference), or the stored triple index's votes. */
export type CandidateKind = 'every' | 'index';

/**
 * Corpora of at most this many points are matched with every translation
 * even through an index: verifying them all costs a few milliseconds a
 * window there, and a folder and its index then give identical numbers.
 */
export const EVERY_TRANSLATION_UP_TO = 5_000;

/** The candidates for a corpus of `points` points: the index's unless `exact` or the corpus is small enough to verify every translation. */
export const candidatesFor = (points: number, exact: boolean): CandidateKind => (exact || points <= EVERY_TRANSLATION_UP_TO ? 'every' : 'index');

/** What the pipeline matches against: the corpus's points, and what its candidate sources need. */
export interface MatchCorpus {
  flat: FlatPoints;
  /** The triple index over `flat` (needed for 'index' candidates and the live path). */
  index?: CorpusIndex;
  /** The fingerprint table over `flat` (needed for tempo-free matching), read when first asked for. */
  fingerprints?: () => StoredFingerprints;
}

export interface MatcherOptions {
  windowBeats: number;
  mode: MatchMode;
  candidates: CandidateKind;
  /** Count each match's distinctiveness (default true). */
  distinctiveness?: boolean;
  /** How the index candidates filter (default DEFAULT_FILTER). */
  filter?: FilterSettings;
}

/** The tolerance tempo-free candidates are verified with: a time scale estimated from notes is never exact. */
export const tempoFreeTolerance = (mode: MatchMode): number => Math.max(mode.tolerance, DEFAULT_FINGERPRINT.tolerance);

/** The name of the reference source, every translation. */
export const EVERY_SOURCE = 'every';

/** Every translation of every piece: the reference every other source is checked against. */
export function everyCandidates(flat: FlatPoints): CandidateSource {
  const pieces = flat.offsets.length - 1;
  return {
    name: EVERY_SOURCE,
    best(window, verify, spanGrains) {
      if (window.points.length === 0) return null;
      const span = { points: window.points, startGrains: window.startGrains, spanGrains };
      let best: WindowMatch | null = null;
      for (let p = 0; p < pieces; p++) if (p !== window.exclude && flat.offsets[p + 1] > flat.offsets[p]) best = verify.every(span, p, best);
      return best;
    },
  };
}

/** One stage: a source of candidates and the verifier that scores them. */
export interface Stage {
  source: CandidateSource;
  verify: Verifier;
  /** Whether the stage is given the earlier stages' best, and may leave out what cannot beat it. */
  narrowed: boolean;
}

/**
 * The stages of a mode: the plain candidates with the mode's verifier, and
 * when tempo-free also the fingerprint candidates, verified within
 * `tempoFreeTolerance`. After a fast source the fingerprint stage is
 * narrowed by the plain stage's best; after every translation, the
 * reference, it searches in full: a place it leaves out for scoring less at
 * its estimated tempo could win once refitted, and the reference must score
 * a window at least as high as any fast source does.
 */
export function stagesOf(corpus: MatchCorpus, plain: CandidateSource, mode: MatchMode): Stage[] {
  checkTolerance(mode.tolerance);
  const stages = [{ source: plain, verify: verifier(corpus.flat, mode.tolerance), narrowed: false }];
  if (!mode.tempoFree) return stages;
  if (!corpus.fingerprints) throw new RangeError('tempo-free matching needs the corpus\'s fingerprint table');
  return [...stages, { source: fingerprintCandidates(corpus.flat, corpus.fingerprints()), verify: verifier(corpus.flat, tempoFreeTolerance(mode)), narrowed: plain.name !== EVERY_SOURCE }];
}

/**
 * The best match of a window over the stages, with its distinctiveness
 * counted through `count` when given: every stage's first look, then the
 * second looks of those that take one (CandidateSource.widen), given the
 * best so far. Tempo-free, a match of the plain candidates carries time
 * scale 1.
 */
export function bestOfStages(stages: readonly Stage[], window: MatchWindow, spanGrains: number, mode: MatchMode, count?: PieceCount): WindowMatch | null {
  if (window.points.length === 0) return null;
  const scaled = (m: WindowMatch | null): WindowMatch | null => (m && mode.tempoFree && m.timeScale === undefined ? { ...m, timeScale: 1 } : m);
  let best: WindowMatch | null = null;
  // Nothing scores above 1: a window matched whole needs no other source's candidates, nor a second look.
  for (const { source, verify, narrowed } of stages) if (!best || best.score < 1) best = better(scaled(source.best(window, verify, spanGrains, narrowed ? best : null)), best);
  for (const { source, verify } of stages) if (source.widen && (!best || best.score < 1)) best = better(scaled(source.widen(window, verify, best)), best);
  if (!best || best.matched === 0 || !count) return best;
  return { ...best, distinctiveness: matchDistinctiveness(count, window, spanGrains, best) };
}

/** How a matcher counts distinctiveness: through the index when its candidates come from it, else by brute force. */
export const pieceCountOf = (corpus: MatchCorpus, mode: MatchMode, throughIndex: boolean): PieceCount => ({
  flat: corpus.flat,
  index: throughIndex ? corpus.index : undefined,
  tolerance: mode.tempoFree ? tempoFreeTolerance(mode) : mode.tolerance,
});

/** The batch matcher for a mode and a candidate source: what `report`, `baseline`, `check` and `review` score with. */
export function windowMatcher(corpus: MatchCorpus, options: MatcherOptions): WindowMatcher {
  const { windowBeats, mode } = options;
  if (options.candidates === 'index' && !corpus.index) throw new RangeError('index candidates need the corpus index');
  const plain = options.candidates === 'index' ? indexCandidates(corpus.index!, options.filter) : everyCandidates(corpus.flat);
  const stages = stagesOf(corpus, plain, mode);
  const spanGrains = toGrains(windowBeats);
  const count = options.distinctiveness === false ? undefined : pieceCountOf(corpus, mode, options.candidates === 'index');
  return { windowBeats, best: (window) => bestOfStages(stages, window, spanGrains, mode, count) };
}
