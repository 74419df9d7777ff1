/**
 * Matching with the corpus index: filter, then verify.
 *
 * A window's triples (core/triple-index.ts) look up their postings, rarest
 * key first, until a vote budget is spent. Each posting votes for the
 * translation taking its corpus anchor onto the window's anchor: (window
 * anchor time − corpus anchor time, window pitch − corpus pitch). The most-voted translations are then scored exactly as
 * core/match.ts scores them, so a score found here is the brute-force score
 * of that translation, never more than the window's exact best, and equal to
 * it whenever the best translation was among those verified. A window that
 * finds no match of 0.5 so reads a little further and verifies more of the
 * translations voted for more than twice (FilterSettings.widenBelow).
 *
 * Windows of at most eight points are scanned instead (scanBest): a match of
 * 0.5 there needs only two to four points in common, too few for triples.
 *
 * @example
 *   const m = indexMatcher(corpusIndex(postings), 16);
 *   m.best(windowPoints, toGrains(32), { exclude: 3 })
 *   // → { piece: 7, pieceStart: 8, transposition: 5, matched: 24, excerptNotes: 24, score: 1 }
 */
import { type Point, GRAINS_PER_BEAT, toGrains } from './note.js';
import { type MatchOptions, type WindowMatch, type WindowMatcher, betterMatch } from './match.js';
import { type CorpusIndex, lowerBoundAt, tripleKey, triplesEndingAt } from './triple-index.js';
import { VoteTable } from './votes.js';

export interface FilterSettings {
  /** The query side's partners per point. The corpus's number is best: more only adds triples the corpus never indexed. */
  queryPartners: number;
  /** Postings read per window before the filter stops looking up triples, rarest first. */
  voteBudget: number;
  /** Triples looked up however common, so a window of common figures still votes. */
  minTriples: number;
  /** Most-voted translations scored exactly. */
  candidates: number;
  /**
   * A window whose best verified score is below this looks again. Votes count
   * shared triples, not the score's share of the excerpt, so a half match in
   * a sparse excerpt can trail, far down the votes, a denser excerpt that
   * scores less (on the chorales, where chord shapes recur everywhere, that
   * cost 1% of the windows scoring ≥ 0.5); a window that found a strong match
   * at once is not looked at again, so verbatim copies cost nothing more.
   */
  widenBelow: number;
  /**
   * The second look reads on, rarest first, to this many postings in all
   * for a corpus of up to a million notes, and √(notes / 1M) times as many
   * beyond (`wideBudgetFor`): a triple's postings grow with the corpus, so a
   * fixed budget reads ever fewer triples (at 10M notes 2,500 postings found
   * 55 of 61 altered copies that reading every posting finds, 8,000 all 61)…
   */
  wideBudget: number;
  /** …and verifies up to this many most-voted translations… */
  wideCandidates: number;
  /** …of those with at least this many votes: a single shared chord shape is not worth verifying. */
  wideVotes: number;
}

export const DEFAULT_FILTER: FilterSettings = { queryPartners: 3, voteBudget: 2_000, minTriples: 6, candidates: 16, widenBelow: 0.5, wideBudget: 2_500, wideCandidates: 128, wideVotes: 3 };

/**
 * Windows with at most this many points are scanned (scanBest): a match of
 * 0.5 there needs only two to four points in common, too few for triples to
 * be sure of finding it, and its excerpt holds at most 16 points, which only
 * sparse stretches of a corpus do.
 */
export const SCAN_POINTS = 8;

/** The key of the triple (a, b, c) of a sorted point run. */
export const keyOf = (points: readonly Point[], a: number, b: number, c: number): number =>
  tripleKey(points[b].at - points[a].at, points[b].pitch - points[a].pitch, points[c].at - points[a].at, points[c].pitch - points[a].pitch);

/**
 * The exact score of one translation of a piece: `shift` grains and `dp`
 * steps from the corpus to the window, the same numbers core/match.ts gives.
 */
export function verifyShift(index: CorpusIndex, window: readonly Point[], startGrains: number, windowGrains: number, piece: number, shift: number, dp: number): WindowMatch {
  const { at, pitch, offsets } = index.points;
  const from = startGrains - shift;
  const lo = lowerBoundAt(at, from, offsets[piece], offsets[piece + 1]);
  const hi = lowerBoundAt(at, from + windowGrains, lo, offsets[piece + 1]);
  let matched = 0;
  let c = lo;
  for (const w of window) {
    const t = w.at - shift;
    const p = w.pitch - dp;
    while (c < hi && (at[c] < t || (at[c] === t && pitch[c] < p))) c++;
    if (c === hi) break;
    if (at[c] === t && pitch[c] === p) matched++;
  }
  const excerptNotes = hi - lo;
  return { piece, pieceStart: from / GRAINS_PER_BEAT, transposition: dp, matched, excerptNotes, score: matched / Math.max(window.length, excerptNotes) };
}

/** Scores the most-voted translations (those with at least `atLeast` votes) exactly; the best under `betterMatch`. */
export function verifyTop(index: CorpusIndex, votes: VoteTable, window: readonly Point[], startGrains: number, windowGrains: number, candidates: number, atLeast = 1): WindowMatch | null {
  let best: WindowMatch | null = null;
  for (const slot of votes.top(candidates, atLeast)) {
    const m = verifyShift(index, window, startGrains, windowGrains, votes.pieceAt(slot), votes.shiftAt(slot), votes.dpAt(slot));
    if (betterMatch(m, best)) best = m;
  }
  return best;
}

/**
 * The best match of a window too small for the filter, exact wherever it
 * scores ≥ 0.5. Such a match puts a window point on a corpus point c whose
 * excerpt holds at most twice the window's points; every W-beat span around
 * c covers a half-window on one side of it, so a corpus point with more than
 * that on both sides is passed over in one linear sweep, and only the few
 * left (near the ends of pieces, in sparse passages) are verified with each
 * window point on them. Below 0.5 the answer may fall short of the exact one.
 */
export function scanBest(index: CorpusIndex, window: readonly Point[], startGrains: number, windowGrains: number, exclude?: number): WindowMatch | null {
  const { at, pitch, offsets } = index.points;
  const most = 2 * window.length;
  const half = Math.floor(windowGrains / 2);
  let best: WindowMatch | null = null;
  for (let piece = 0; piece < index.pieces; piece++) {
    if (piece === exclude) continue;
    const end = offsets[piece + 1];
    let from = offsets[piece];
    let to = from;
    let groupStart = from;
    let groupEnd = from;
    for (let c = offsets[piece]; c < end; c++) {
      if (c >= groupEnd) {
        groupStart = c;
        for (groupEnd = c; groupEnd < end && at[groupEnd] === at[c]; groupEnd++);
      }
      while (at[from] < at[c] - half) from++;
      while (to < end && at[to] <= at[c] + half) to++;
      if (Math.min(groupEnd - from, to - groupStart) > most) continue;
      for (const w of window) {
        const m = verifyShift(index, window, startGrains, windowGrains, piece, w.at - at[c], w.pitch - pitch[c]);
        if (betterMatch(m, best)) best = m;
      }
    }
  }
  return best;
}

/**
 * The triples of a sorted point run that the corpus has, rarest first, in
 * reusable typed buffers: a window looks up thousands, so no object each.
 */
export class TripleLookups {
  private order = new Float64Array(1024);
  private anchor = new Int32Array(1024);
  private key = new Int32Array(1024);
  private n = 0;

  clear(): void {
    this.n = 0;
  }

  /** Looks up the triples ending at point `c` (those starting at `from` or later) and keeps the ones the corpus has. */
  collect(index: CorpusIndex, points: readonly Point[], at: ArrayLike<number>, from: number, c: number, partners: number, horizon: number): void {
    triplesEndingAt(at, from, c, partners, horizon, (a, b) => this.keep(index, keyOf(points, a, b, c), a));
  }

  /** Keeps one triple's key, anchored at point `anchor`, when the corpus has it. */
  keep(index: CorpusIndex, key: number, anchor: number): void {
    const k = index.find(key);
    if (k < 0) return;
    if (this.n === this.key.length) this.grow();
    // Postings first, then the order found: sorting one double sorts by both.
    this.order[this.n] = (index.starts[k + 1] - index.starts[k]) * 2 ** 21 + this.n;
    this.anchor[this.n] = anchor;
    this.key[this.n++] = k;
  }

  private grow(): void {
    const order = new Float64Array(this.order.length * 2);
    const anchor = new Int32Array(order.length);
    const key = new Int32Array(order.length);
    order.set(this.order);
    anchor.set(this.anchor);
    key.set(this.key);
    [this.order, this.anchor, this.key] = [order, anchor, key];
  }

  /** How many triples are kept. */
  get size(): number {
    return this.n;
  }

  /** Sorts the kept triples rarest first; returns how many there are, to read with anchorAt and keyAt. */
  sort(): number {
    if (this.n > 2 ** 21) throw new RangeError(`too many triples in one window (${this.n}); use a shorter window`);
    this.order.subarray(0, this.n).sort();
    return this.n;
  }

  /** The window point anchoring the r-th rarest triple. */
  anchorAt(r: number): number {
    return this.anchor[this.order[r] % 2 ** 21];
  }

  /** Position in the index's keys of the r-th rarest triple. */
  keyAt(r: number): number {
    return this.key[this.order[r] % 2 ** 21];
  }
}

/**
 * Adds `delta` votes from every posting of key position `k`, each for the
 * translation taking that corpus anchor onto the window point `anchor`;
 * postings at [skipFrom, skipTo) (a piece left out) do not vote.
 */
export function castVotes(index: CorpusIndex, votes: VoteTable, anchor: Point, k: number, delta: number, skipFrom = 0, skipTo = 0): void {
  const { packed, anchors, starts } = index;
  for (let s = starts[k]; s < starts[k + 1]; s++) {
    const a = anchors[s];
    if (a < skipFrom || a >= skipTo) votes.add(packed[2 * a + 1] >>> 8, anchor.at - packed[2 * a], anchor.pitch - (packed[2 * a + 1] & 255), delta);
  }
}

/** How far a reading of kept triples, rarest first, has got: the next triple to read, and the postings read so far. */
export interface RarestRead {
  next: number;
  spent: number;
}

/**
 * Votes with the sorted `lookups` from `read.next` on, rarest first, each
 * posting for the translation onto the point of `anchors` the triple starts
 * at, until `budget` postings are read in all — but at least `minTriples`
 * triples, so a run of common figures still votes. Postings at
 * [skipFrom, skipTo) (a piece left out) do not vote. Called again with a
 * larger budget, it reads on where it stopped.
 */
export function voteRarest(index: CorpusIndex, votes: VoteTable, lookups: TripleLookups, anchors: readonly Point[], read: RarestRead, budget: number, minTriples: number, skipFrom = 0, skipTo = 0): void {
  const { starts } = index;
  for (const found = lookups.size; read.next < found; read.next++) {
    const k = lookups.keyAt(read.next);
    const size = starts[k + 1] - starts[k];
    if (read.next >= minTriples && read.spent + size > budget) break;
    read.spent += size;
    castVotes(index, votes, anchors[lookups.anchorAt(read.next)], k, 1, skipFrom, skipTo);
  }
}

/** The second look's budget for a corpus of `notes` notes (FilterSettings.wideBudget). */
export const wideBudgetFor = (settings: FilterSettings, notes: number): number => Math.round(settings.wideBudget * Math.max(1, Math.sqrt(notes / 1_000_000)));

/** The batch matcher over an index; `report` and `baseline` use it like the exact one. */
export function indexMatcher(index: CorpusIndex, windowBeats: number, settings: FilterSettings = DEFAULT_FILTER): WindowMatcher {
  const windowGrains = toGrains(windowBeats);
  const horizon = toGrains(index.shape.horizonBeats);
  const votes = new VoteTable();
  const lookups = new TripleLookups();
  const { offsets } = index.points;
  const wideBudget = wideBudgetFor(settings, index.points.at.length);
  return {
    windowBeats,
    best(window: readonly Point[], startGrains: number, options: MatchOptions = {}) {
      if (window.length === 0) return null;
      if (window.length <= SCAN_POINTS) return scanBest(index, window, startGrains, windowGrains, options.exclude);
      lookups.clear();
      const at = window.map((w) => w.at);
      for (let c = 2; c < window.length; c++) lookups.collect(index, window, at, 0, c, settings.queryPartners, horizon);
      const skipFrom = options.exclude === undefined ? 0 : offsets[options.exclude];
      const skipTo = options.exclude === undefined ? 0 : offsets[options.exclude + 1];
      votes.clear();
      lookups.sort();
      const read: RarestRead = { next: 0, spent: 0 };
      voteRarest(index, votes, lookups, window, read, settings.voteBudget, settings.minTriples, skipFrom, skipTo);
      const first = verifyTop(index, votes, window, startGrains, windowGrains, settings.candidates);
      if ((first?.score ?? 0) >= settings.widenBelow) return first;
      voteRarest(index, votes, lookups, window, read, wideBudget, settings.minTriples, skipFrom, skipTo);
      const wide = verifyTop(index, votes, window, startGrains, windowGrains, settings.wideCandidates, settings.wideVotes);
      return wide && betterMatch(wide, first) ? wide : first;
    },
  };
}
