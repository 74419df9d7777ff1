/**
 * The stored triple index as a candidate source of the matching pipeline
 * (core/pipeline.ts): filter, then verify.
 *
 * A window's triples (core/triple-index.ts) look up their postings, rarest
 * key first, until a vote budget is spent. Each posting votes for the
 * translation taking its corpus anchor onto the window's anchor: (window
 * anchor time − corpus anchor time, window pitch − corpus pitch). The
 * most-voted translations are then scored by the pipeline's verifier
 * (core/verify.ts), so a score found here is the score of a real
 * translation, never more than the reference's. A window for which no
 * stage of the pipeline found a match of 0.5 reads a little further and
 * verifies more of the translations voted for more than twice
 * (FilterSettings.widenBelow, CandidateSource.widen).
 *
 * Within a tolerance, the window votes with its onsets snapped to each of
 * the VOTE_GRIDS, the first look's budget shared between them (triple keys
 * compare exact time differences, and a note played a little early would
 * share no key with the corpus); each run of nearby voted shifts is
 * verified as one search around them.
 *
 * Windows of at most eight points are scanned instead (scanBest): a match of
 * 0.5 there needs only two to four points in common, too few for triples.
 *
 * @example
 *   const source = indexCandidates(corpusIndex(postings));
 *   const window = { points: windowPoints, startGrains: toGrains(32), exclude: 3 };
 *   const first = source.best(window, verifier(flat, 0), toGrains(16))
 *   // → { piece: 7, pieceStart: 8, transposition: 5, matched: 24, excerptNotes: 24, score: 1 }
 *   source.widen(window, verifier(flat, 0), first)   // → first again: it scored ≥ 0.5, so no second look
 */
import { type Point, GRAINS_PER_BEAT, comparePoints, toGrains } from './note.js';
import { type MatchWindow, type WindowMatch, betterMatch } from './match.js';
import { type CorpusIndex, tripleKey, triplesEndingAt } from './triple-index.js';
import { type Candidate, type Span, type Verifier, verifyShift } from './verify.js';
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
   * "At once" counts every stage's first look: tempo-free, a copy at another
   * tempo that the fingerprints find spares the second look too.
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

/** A voted translation: `shift` grains and `dp` steps from the corpus piece to the voting points. */
export interface VotedTranslation {
  piece: number;
  shift: number;
  dp: number;
  votes: number;
}

/** The `n` most-voted translations with at least `atLeast` votes, most first. */
export function topVoted(votes: VoteTable, n: number, atLeast = 1): VotedTranslation[] {
  return votes.top(n, atLeast).map((e) => ({ piece: votes.pieceAt(e), shift: votes.shiftAt(e), dp: votes.dpAt(e), votes: votes.countAt(e) }));
}

/**
 * Divisions of a beat onsets snap to before voting within a tolerance, each
 * grid a vote of its own: 12 holds sixteenths and triplets, and brings back
 * a note played up to 1/24 beat off; 4 brings back a sixteenth played up to
 * ⅛ beat off, which 12 would snap to a neighbour. Exactly, a window votes
 * with its onsets as they are: a note off the corpus's grid cannot match.
 */
export const VOTE_GRIDS = { fine: 12, coarse: 4 };
export const FINE_GRAINS = GRAINS_PER_BEAT / VOTE_GRIDS.fine;
export const COARSE_GRAINS = GRAINS_PER_BEAT / VOTE_GRIDS.coarse;

/** Snaps an ontime to a grid step of `grains`. */
export const snapTo = (at: number, grains: number): number => Math.round(at / grains) * grains;

/** Points snapped to a grid step, sorted, one per ontime and pitch. */
export function snapPoints(points: readonly Point[], grains: number): Point[] {
  const out: Point[] = [];
  for (const p of points.map((q) => ({ at: snapTo(q.at, grains), pitch: q.pitch })).sort(comparePoints)) {
    const last = out[out.length - 1];
    if (!last || comparePoints(last, p) !== 0) out.push(p);
  }
  return out;
}

/**
 * The candidates voted translations give the verifier. Exactly, each is
 * itself. Within a tolerance, voted translations of one piece and
 * transposition lie close together when a passage's notes snapped a little
 * differently (a voted shift is off the played one by up to half a grid
 * step): each run of shifts no more than `within` apart is one search,
 * around its middle, reaching `within` past its ends.
 */
export function candidatesOf(voted: readonly VotedTranslation[], toleranceGrains: number): Candidate[] {
  if (toleranceGrains === 0) return voted.map((t) => ({ piece: t.piece, shift: t.shift, dp: t.dp, within: 0 }));
  const within = toleranceGrains + COARSE_GRAINS / 2;
  const sorted = [...voted].sort((a, b) => a.piece - b.piece || a.dp - b.dp || a.shift - b.shift);
  const groups: { piece: number; dp: number; lo: number; hi: number }[] = [];
  for (const t of sorted) {
    const last = groups[groups.length - 1];
    if (last && last.piece === t.piece && last.dp === t.dp && t.shift - last.hi <= within) last.hi = t.shift;
    else groups.push({ piece: t.piece, dp: t.dp, lo: t.shift, hi: t.shift });
  }
  return groups.map((g) => {
    const shift = Math.floor((g.lo + g.hi) / 2);
    return { piece: g.piece, dp: g.dp, shift, within: within + Math.max(shift - g.lo, g.hi - shift) };
  });
}

/**
 * The best of the candidates, each scored by the verifier, the most
 * promising first (by the verifier's bound); a candidate whose bound cannot
 * reach the best score so far is not verified, as it could not beat it.
 */
export function verifyAll(span: Span, candidates: readonly Candidate[], verify: Verifier, best: WindowMatch | null = null): WindowMatch | null {
  const n = span.points.length;
  const ranked = candidates.map((c) => ({ c, bound: verify.bound(span, c) })).sort((x, y) => y.bound - x.bound);
  for (const { c, bound } of ranked) {
    if (best && bound / n < best.score) break;
    best = verify.near(span, c, best);
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
export function scanBest(index: CorpusIndex, span: Span, exclude?: number): WindowMatch | null {
  const { at, pitch, offsets } = index.points;
  const window = span.points;
  const most = 2 * window.length;
  const half = Math.floor(span.spanGrains / 2);
  let best: WindowMatch | null = null;
  for (let piece = 0; piece < index.pieces; piece++) {
    if (piece === exclude) continue;
    index.points.ensure?.(piece);
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
        const m = verifyShift(index.points, span, piece, w.at - at[c], w.pitch - pitch[c]);
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
 * postings in piece `skip` (a piece left out) do not vote.
 */
export function castVotes(index: CorpusIndex, votes: VoteTable, anchor: Point, k: number, delta: number, skip = -1): void {
  const { posted, starts } = index;
  index.gather(k);
  for (let s = starts[k]; s < starts[k + 1]; s++) {
    const piece = posted[2 * s + 1] >>> 8;
    if (piece !== skip) votes.add(piece, anchor.at - posted[2 * s], anchor.pitch - (posted[2 * s + 1] & 255), delta);
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
 * in piece `skip` (a piece left out) do not vote. Called again with a
 * larger budget, it reads on where it stopped.
 */
export function voteRarest(index: CorpusIndex, votes: VoteTable, lookups: TripleLookups, anchors: readonly Point[], read: RarestRead, budget: number, minTriples: number, skip = -1): void {
  const { starts } = index;
  for (const found = lookups.size; read.next < found; read.next++) {
    const k = lookups.keyAt(read.next);
    const size = starts[k + 1] - starts[k];
    if (read.next >= minTriples && read.spent + size > budget) break;
    read.spent += size;
    castVotes(index, votes, anchors[lookups.anchorAt(read.next)], k, 1, skip);
  }
}

/** The second look's budget for a corpus of `notes` notes (FilterSettings.wideBudget). */
export const wideBudgetFor = (settings: FilterSettings, notes: number): number => Math.round(settings.wideBudget * Math.max(1, Math.sqrt(notes / 1_000_000)));

/** What a candidate source gives the pipeline: a window's best match among its candidates, each scored by the verifier. */
export interface CandidateSource {
  /** For benchmarks and reports: where the candidates come from. */
  readonly name: string;
  /**
   * The best verified match of the window. `incumbent`, when given, is the
   * best an earlier stage found: a source may leave out what cannot beat it,
   * and then answers null.
   */
  best(window: MatchWindow, verify: Verifier, spanGrains: number, incumbent?: WindowMatch | null): WindowMatch | null;
  /**
   * A second, costlier look at the window `best` was last asked about, taken
   * once every stage has had its first (core/pipeline.ts bestOfStages), so a
   * strong match from any stage spares it. Answers what it finds that beats
   * `incumbent` (the best of every stage so far), else the incumbent.
   */
  widen?(window: MatchWindow, verify: Verifier, incumbent: WindowMatch | null): WindowMatch | null;
}

/**
 * Candidates voted by the stored triple index for a whole window at once:
 * the batch commands' source. Within a tolerance a window of at most
 * SCAN_POINTS points is scanned exactly, and the scan's best translation is
 * verified within the tolerance together with the voted ones.
 */
export function indexCandidates(index: CorpusIndex, settings: FilterSettings = DEFAULT_FILTER): CandidateSource {
  const horizon = toGrains(index.shape.horizonBeats);
  const wideBudget = wideBudgetFor(settings, index.points.at.length);
  // One vote table and lookup buffer per view of the window, reused: fresh ones would grow to the same size each time.
  const pool = [0, 1].map(() => ({ votes: new VoteTable(), lookups: new TripleLookups() }));
  /** The votes of one view of the window (as played, or snapped to a grid), read on as far as `budget` on each call. */
  const voter = (slot: number, points: readonly Point[], skip: number) => {
    const { votes, lookups } = pool[slot];
    votes.clear();
    lookups.clear();
    const at = points.map((w) => w.at);
    for (let c = 2; c < points.length; c++) lookups.collect(index, points, at, 0, c, settings.queryPartners, horizon);
    lookups.sort();
    const read: RarestRead = { next: 0, spent: 0 };
    return (budget: number, n: number, atLeast: number): VotedTranslation[] => {
      voteRarest(index, votes, lookups, points, read, budget, settings.minTriples, skip);
      return topVoted(votes, n, atLeast);
    };
  };
  /** The last window voted for, with what its second look needs; null after a window too small to vote. */
  let looked: { window: MatchWindow; span: Span; tolGrains: number; voters: ReturnType<typeof voter>[] } | null = null;
  return {
    name: 'index',
    best(window, verify, spanGrains) {
      looked = null;
      const points = window.points;
      if (points.length === 0) return null;
      const span: Span = { points, startGrains: window.startGrains, spanGrains };
      const tolGrains = toGrains(verify.toleranceBeats);
      if (points.length <= SCAN_POINTS) {
        const scanned = scanBest(index, span, window.exclude);
        if (tolGrains === 0 || !scanned) return scanned;
        const shift = window.startGrains - Math.round(scanned.pieceStart * GRAINS_PER_BEAT);
        return verifyAll(span, [{ piece: scanned.piece, shift, dp: scanned.transposition, within: tolGrains }], verify);
      }
      // Exactly, the window votes as it is. Within a tolerance it votes snapped to each grid, the vote
      // budget shared between them: reading postings is most of the cost.
      const views = tolGrains === 0 ? [points] : [snapPoints(points, FINE_GRAINS), snapPoints(points, COARSE_GRAINS)];
      const voters = views.map((view, slot) => voter(slot, view, window.exclude ?? -1));
      const share = (budget: number): number => Math.round(budget / voters.length);
      // Within a tolerance one shared triple (three notes in common) is not worth a search of its own.
      looked = { window, span, tolGrains, voters };
      return verifyAll(span, candidatesOf(voters.flatMap((v) => v(share(settings.voteBudget), settings.candidates, tolGrains === 0 ? 1 : 2)), tolGrains), verify);
    },
    widen(window, verify, incumbent) {
      if ((incumbent?.score ?? 0) >= settings.widenBelow || window.points.length <= SCAN_POINTS) return incumbent;
      if (looked?.window !== window) throw new Error('widen asks about a window other than the last one voted for: call best first');
      const { span, tolGrains, voters } = looked;
      return verifyAll(span, candidatesOf(voters.flatMap((v) => v(wideBudget, settings.wideCandidates, settings.wideVotes)), tolGrains), verify, incumbent);
    },
  };
}
