/**
 * The matching modes a report, a baseline or a live preset can ask for, and
 * the matcher each one means: exact, played timing (`tolerance` > 0 beats),
 * any tempo (`tempoFree`), and always the distinctiveness of each match.
 *
 * @example
 *   const m = modeMatcher(view, 16, { tolerance: 0.1, tempoFree: true });
 *   m.best(window, 0)   // → { ..., score: 0.94, timeScale: 1.5, distinctiveness: 1 }
 */
import type { CorpusPoints } from './corpus.js';
import { type WindowMatcher, exactMatcher } from './match.js';
import { toleranceMatcher } from './tolerance.js';
import { DEFAULT_FINGERPRINT, tempoFreeMatcher } from './fingerprint.js';
import { withDistinctiveness } from './distinctiveness.js';
import type { CorpusIndex } from './triple-index.js';

export interface MatchMode {
  /** Beats an ontime may stray from the corpus's; 0 = exact. */
  tolerance: number;
  /** Also search tempo ratios 0.5–2 by fingerprinting. */
  tempoFree: boolean;
}

export const EXACT_MODE: MatchMode = { tolerance: 0, tempoFree: false };

/**
 * The matcher for a mode. `exact` is the exact-mode matcher to build on (an
 * indexed one, say); it defaults to the brute-force reference. With the
 * corpus `index`, distinctiveness is counted through it too, so the exact
 * mode then costs nothing that grows with the corpus.
 */
export function modeMatcher(corpus: CorpusPoints, windowBeats: number, mode: MatchMode, exact: WindowMatcher = exactMatcher(corpus, windowBeats), index?: CorpusIndex): WindowMatcher {
  const base = mode.tolerance > 0 ? toleranceMatcher(corpus, windowBeats, mode.tolerance) : exact;
  if (!mode.tempoFree) return withDistinctiveness(base, corpus, mode.tolerance, index);
  // Verification after rescaling needs some tolerance even when the user asked for none.
  const tolerance = Math.max(mode.tolerance, DEFAULT_FINGERPRINT.tolerance);
  return withDistinctiveness(tempoFreeMatcher(corpus, base, { tolerance }), corpus, tolerance, index);
}
