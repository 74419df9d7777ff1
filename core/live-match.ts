/**
 * Live matching at a cost that does not grow with the corpus: the streaming
 * index's votes (core/stream.ts) name a few candidate translations, each is
 * verified on the window as played — exactly, or within a tolerance — and
 * the best one's distinctiveness is counted through the index too.
 *
 * Votes are cast with onsets snapped to the VOTE_GRIDS, whatever grid the
 * caller matches with: triple keys compare exact time
 * differences, and a note played a few milliseconds early would otherwise
 * share no key with the corpus. Verification then looks at the points as
 * given, within `tolerance` beats, around each voted shift. A passage played
 * loosely enough that few of its triples snap back to the corpus's keys may
 * get no vote for its true translation; it then scores what the candidates
 * found, never more than the brute force would.
 *
 * Points come in time order, one at a time (`add`); the window's start
 * moves with `expire`. A point earlier than one already added (a late note
 * from a bundle), a reset or a new matcher leave the votes stale, and the
 * next `best` rebuilds them from the window it is given.
 *
 * @example
 *   const live = new LiveMatcher(index, { windowBeats: 16, tolerance: 0.1 });
 *   for (const p of played) { live.add(p); live.expire(windowStart); }
 *   live.best(windowPoints, windowStart)
 *   // → { piece: 7, pieceStart: 8, transposition: 5, matched: 22, excerptNotes: 24, score: 0.917, distinctiveness: 1 }
 */
import { type Point, GRAINS_PER_BEAT, toGrains } from './note.js';
import { type WindowMatch, betterMatch } from './match.js';
import { type CorpusIndex, lowerBoundAt } from './triple-index.js';
import { SCAN_POINTS, verifyShift } from './index-match.js';
import { StreamingMatch, type VotedTranslation } from './stream.js';
import { type PitchLines, bestInPiece, checkTolerance, pitchLines } from './tolerance.js';
import { figureDistinctiveness, indexedPlacesHolding, matchedMaterial } from './distinctiveness.js';

/**
 * Divisions of a beat onsets snap to before voting, each grid a stream of
 * votes of its own: 12 holds sixteenths and triplets, and brings back a note
 * played up to 1/24 beat off; 4 brings back a sixteenth played up to ⅛ beat
 * off, which 12 would snap to a neighbour. The coarse one votes only when
 * matching within a tolerance: exactly, a note that far off cannot match.
 */
export const VOTE_GRIDS = { fine: 12, coarse: 4 };
const FINE_GRAINS = GRAINS_PER_BEAT / VOTE_GRIDS.fine;
const COARSE_GRAINS = GRAINS_PER_BEAT / VOTE_GRIDS.coarse;

/** Most-voted translations verified per evaluation. */
export const LIVE_CANDIDATES = 16;

/** Played times are kept relative to an origin so that shifts stay well inside int32 however long a session runs. */
const REBASE_GRAINS = 2 ** 30;

export interface LiveMatcherOptions {
  windowBeats: number;
  /** Beats a played onset may stray from the corpus's; 0 = exact. */
  tolerance: number;
}

/**
 * Voted translations of one piece and transposition lie close together when
 * a passage's notes snapped a little differently: each run of shifts no more
 * than `within` apart is one search, around its middle, reaching `within`
 * past its ends.
 */
export function nearbyGroups(candidates: readonly VotedTranslation[], within: number): { piece: number; dp: number; shift: number; within: number }[] {
  const sorted = [...candidates].sort((a, b) => a.piece - b.piece || a.dp - b.dp || a.shift - b.shift);
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

const snap = (at: number, grains: number): number => Math.round(at / grains) * grains;
const snapDown = (at: number, grains: number): number => Math.floor(at / grains) * grains;

/** One grid's votes: the played points snapped to it, streamed. */
interface Voter {
  grains: number;
  stream: StreamingMatch;
  newest: number;
}

export class LiveMatcher {
  private readonly windowGrains: number;
  private readonly tolGrains: number;
  private readonly grids: number[];
  private voters: Voter[] = [];
  /** Times are counted from here, a multiple of every grid's step. */
  private origin = 0;
  /** Set when the votes no longer follow the window (a late note, a reset, a new matcher): `best` rebuilds them. */
  private stale = true;

  constructor(
    private readonly index: CorpusIndex,
    private readonly options: LiveMatcherOptions,
  ) {
    checkTolerance(options.tolerance);
    this.windowGrains = toGrains(options.windowBeats);
    this.tolGrains = toGrains(options.tolerance);
    this.grids = this.tolGrains > 0 ? [FINE_GRAINS, COARSE_GRAINS] : [FINE_GRAINS];
  }

  /** Adds a played point (ontime in grains ≥ 0, pitch in the index's dimension). */
  add(point: Point): void {
    if (this.stale) return;
    if (point.at < this.origin || point.at - this.origin > REBASE_GRAINS || this.voters.some((v) => snap(point.at, v.grains) < v.newest)) {
      this.stale = true;
      return;
    }
    for (const v of this.voters) {
      v.newest = snap(point.at, v.grains);
      v.stream.add({ at: v.newest - this.origin, pitch: point.pitch });
    }
  }

  /** The window now starts at `startGrains`: votes of earlier points are taken back. */
  expire(startGrains: number): void {
    if (this.stale) return;
    for (const v of this.voters) v.stream.expire(Math.max(0, snapDown(startGrains, v.grains) - this.origin));
  }

  /** Forgets every point: a new passage. The next `best` builds the votes afresh from the window it is given. */
  reset(): void {
    this.stale = true;
  }

  /** Votes from nothing but `window`, with times counted from its start. */
  private rebuild(window: readonly Point[], startGrains: number): void {
    this.voters = this.grids.map((grains) => ({ grains, stream: new StreamingMatch(this.index, { windowBeats: this.options.windowBeats }), newest: -Infinity }));
    this.origin = snapDown(Math.min(startGrains, window[0].at), COARSE_GRAINS);
    this.stale = false;
    for (const p of window) this.add(p);
    this.expire(startGrains);
  }

  /**
   * The points of `piece` a window matched at about `shift` can reach, with
   * their pitch lines: the excerpt ± `margin` grains, so verification never
   * builds anything for a whole piece.
   */
  private around(piece: number, startGrains: number, shift: number, margin: number): { points: Point[]; lines: PitchLines } {
    const { at, pitch, offsets } = this.index.points;
    const from = lowerBoundAt(at, startGrains - shift - margin, offsets[piece], offsets[piece + 1]);
    const to = lowerBoundAt(at, startGrains - shift + this.windowGrains + margin, from, offsets[piece + 1]);
    const points: Point[] = [];
    for (let i = from; i < to; i++) points.push({ at: at[i], pitch: pitch[i] });
    return { points, lines: pitchLines(points) };
  }

  /** The best verified match of `window` (sorted points, ontimes in [startGrains, startGrains + W)), with its distinctiveness. */
  best(window: readonly Point[], startGrains: number): WindowMatch | null {
    if (window.length === 0) return null;
    if (this.stale) this.rebuild(window, startGrains);
    let best: WindowMatch | null = null;
    // One shared triple is three notes in common: worth a look only in a window too small for more.
    const atLeast = window.length > SCAN_POINTS ? 2 : 1;
    const candidates = this.voters.flatMap((v) => v.stream.translations(LIVE_CANDIDATES, atLeast));
    if (this.tolGrains === 0) {
      for (const t of candidates) {
        const m = verifyShift(this.index, window, startGrains, this.windowGrains, t.piece, t.shift + this.origin, t.dp);
        if (betterMatch(m, best)) best = m;
      }
    } else {
      // A voted shift is off the played one by up to half a grid step; tolerant verification looks that far and a tolerance more, refined by up to two tolerances more.
      const within = this.tolGrains + COARSE_GRAINS / 2;
      for (const g of nearbyGroups(candidates, within)) {
        const shift = g.shift + this.origin;
        const near = { translation: { at: shift, pitch: g.dp }, within: g.within };
        const m = bestInPiece({ piece: g.piece, ...this.around(g.piece, startGrains, shift, g.within + 3 * this.tolGrains), window, startGrains, spanGrains: this.windowGrains, tolGrains: this.tolGrains, near }, null);
        if (m && betterMatch(m, best)) best = m;
      }
    }
    if (!best || best.matched === 0) return best;
    const bestShift = startGrains - toGrains(best.pieceStart);
    const material = matchedMaterial(this.around(best.piece, startGrains, bestShift, this.tolGrains).lines, window, startGrains, best, this.tolGrains);
    return { ...best, distinctiveness: figureDistinctiveness(material, (x) => indexedPlacesHolding(this.index, best!.piece, x)) };
  }
}
