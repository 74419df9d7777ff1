/**
 * Matchers built straight from point sets, for tests: the corpus's flat
 * points with its triple index and fingerprint table made in memory, and
 * the pipeline (core/pipeline.ts) over them with either candidate source.
 *
 * @example
 *   const exact = exactMatcher(view, 16);                      // every translation, the reference
 *   const fast = indexedMatcher(view, 16, { tolerance: 0.1, tempoFree: false });
 *   fast.best({ points: window, startGrains: 0 })
 */
import type { CorpusPoints } from '../../core/corpus.js';
import type { WindowMatcher } from '../../core/match.js';
import type { FilterSettings } from '../../core/index-match.js';
import { type FingerprintTable, buildFingerprints } from '../../core/fingerprint.js';
import { type CorpusIndex, buildTriples, corpusIndex, flattenPoints } from '../../core/triple-index.js';
import { type CandidateKind, type MatchCorpus, type MatchMode, EXACT_MODE, windowMatcher } from '../../core/pipeline.js';

const made = new WeakMap<CorpusPoints, MatchCorpus & { index: CorpusIndex }>();

/** What the pipeline reads of a view, made once per view. */
export function matchCorpusOf(view: CorpusPoints): MatchCorpus & { index: CorpusIndex } {
  const known = made.get(view);
  if (known) return known;
  const flat = flattenPoints(view);
  let table: FingerprintTable | null = null;
  const corpus = { flat, index: corpusIndex(buildTriples(flat)), fingerprints: () => (table ??= buildFingerprints(flat)) };
  made.set(view, corpus);
  return corpus;
}

export interface TestMatcherOptions {
  mode?: MatchMode;
  distinctiveness?: boolean;
  filter?: FilterSettings;
}

const matcher = (candidates: CandidateKind) => (view: CorpusPoints, windowBeats: number, options: TestMatcherOptions = {}): WindowMatcher =>
  windowMatcher(matchCorpusOf(view), { windowBeats, mode: options.mode ?? EXACT_MODE, candidates, distinctiveness: options.distinctiveness ?? false, filter: options.filter });

/** Every translation verified: the reference (no distinctiveness unless asked). */
export const exactMatcher = matcher('every');

/** Candidates voted by the triple index (no distinctiveness unless asked). */
export const indexedMatcher = matcher('index');
