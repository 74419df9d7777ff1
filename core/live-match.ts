/**
 * Live matching at a cost that does not grow with the corpus: the matching
 * pipeline (core/pipeline.ts) with the streaming index (core/stream.ts) as
 * its candidate source. A few voted translations are verified on the window
 * as played — exactly, or within a tolerance — tempo-free also the
 * fingerprint table's candidates, and the best match's distinctiveness is
 * counted through the index too.
 *
 * Votes are cast with onsets snapped to the VOTE_GRIDS (core/index-match.ts),
 * whatever grid the caller matches with: triple keys compare exact time
 * differences, and a note played a few milliseconds early would otherwise
 * share no key with the corpus. A passage played loosely enough that few of
 * its triples snap back to the corpus's keys may get no vote for its true
 * translation; it then scores what the candidates found, never more than
 * the reference would.
 *
 * Points come in time order, one at a time (`add`); the window's start
 * moves with `expire`. A point earlier than one already added (a late note
 * from a bundle), a reset or a new matcher leave the votes stale, and the
 * next `best` rebuilds them from the window it is given.
 *
 * @example
 *   const live = new LiveMatcher({ flat: index.points, index }, { windowBeats: 16, mode: { tolerance: 0.1, tempoFree: false } });
 *   for (const p of played) { live.add(p); live.expire(windowStart); }
 *   live.best({ points: windowPoints, startGrains: windowStart })
 *   // → { piece: 7, pieceStart: 8, transposition: 5, matched: 22, excerptNotes: 24, score: 0.917, distinctiveness: 1 }
 */
import { type Point, GRAINS_PER_BEAT, comparePoints, toGrains } from './note.js';
import type { MatchWindow, WindowMatch } from './match.js';
import type { CorpusIndex } from './triple-index.js';
import { type CandidateSource, COARSE_GRAINS, FINE_GRAINS, SCAN_POINTS, candidatesOf, snapTo, verifyAll } from './index-match.js';
import { StreamingMatch } from './stream.js';
import { type MatchCorpus, type MatchMode, type Stage, bestOfStages, pieceCountOf, stagesOf } from './pipeline.js';
import { type PieceCount, matchDistinctiveness } from './distinctiveness.js';
import { type StretchMatch, stretchMatches } from './stretch.js';

/** Most-voted translations verified per scoring pass, per vote grid. */
export const LIVE_CANDIDATES = 16;

/** Most-voted translations per vote grid that the recent stretches are verified against (core/stretch.ts). */
export const STRETCH_CANDIDATES = 32;

/** Played times are kept relative to an origin so that shifts stay well inside int32 however long a session runs. */
const REBASE_GRAINS = 2 ** 30;

/**
 * Vote table size (2^bits slots) for a matcher that listens for hours: a
 * long window of a large corpus holds many thousands of live entries, and a
 * table that grows mid-performance makes that note wait.
 */
export const LIVE_TABLE_BITS = 17;

/** The warm-up (`warmUpPassages`): corpus passages played, and points in each. */
export const WARM_UP_PASSAGES = 8;
export const WARM_UP_POINTS = 200;

/**
 * What a matcher plays before it listens: passages of the corpus spread over
 * its pieces, played four ways in turn — as written, with the pitches in
 * reverse (no match), a fourth up and loose by 1/48 beat either way (a
 * match within a tolerance, transposed), and with every third note left out.
 * Playing them runs every path a performance takes — votes, verification,
 * stretches, distinctiveness — so the engine has compiled them and the
 * tables have grown before the first played note, not during it. Each
 * passage starts at time 0, in time order, no point twice.
 *
 * @example
 *   warmUpPassages(corpus.flat).length   // → 8 (fewer when the corpus has fewer pieces)
 *   warmUpPassages(corpus.flat)[0][0]    // → { at: 0, pitch: 62 }
 */
export function warmUpPassages(flat: MatchCorpus['flat'], options: { passages?: number; points?: number } = {}): Point[][] {
  const { offsets, at, pitch } = flat;
  const pieces = offsets.length - 1;
  const count = Math.min(options.passages ?? WARM_UP_PASSAGES, pieces);
  const loose = GRAINS_PER_BEAT / 48;
  const out: Point[][] = [];
  for (let w = 0; w < count; w++) {
    const piece = Math.floor((w * pieces) / count);
    flat.ensure?.(piece);
    const from = offsets[piece];
    const to = Math.min(offsets[piece + 1], from + (options.points ?? WARM_UP_POINTS));
    const passage: Point[] = [];
    for (let i = from; i < to; i++) {
      const k = i - from;
      if (w % 4 === 3 && k % 3 === 2) continue;
      const shift = w % 4 === 2 ? (k % 2 ? loose : -loose) : 0;
      passage.push({ at: Math.max(0, at[i] - at[from] + shift), pitch: w % 4 === 1 ? pitch[to - 1 - k] : pitch[i] + (w % 4 === 2 ? 5 : 0) });
    }
    passage.sort(comparePoints);
    out.push(passage.filter((p, i) => i === 0 || comparePoints(passage[i - 1], p) !== 0));
  }
  return out;
}

export interface LiveMatcherOptions {
  windowBeats: number;
  mode: MatchMode;
  /** Each stream's vote table at the start, 2^bits slots (core/votes.ts); default 12, grown as needed. */
  tableBits?: number;
}

const snapDown = (at: number, grains: number): number => Math.floor(at / grains) * grains;

/** One grid's votes: the played points snapped to it, streamed. */
interface Voter {
  grains: number;
  stream: StreamingMatch;
  newest: number;
}

export class LiveMatcher {
  private readonly windowGrains: number;
  private readonly grids: number[];
  private readonly index: CorpusIndex;
  private readonly flat: MatchCorpus['flat'];
  private readonly stages: Stage[];
  private readonly count: PieceCount;
  private voters: Voter[] = [];
  /** Times are counted from here, a multiple of every grid's step. */
  private origin = 0;
  /** Set when the votes no longer follow the window (a late note, a reset, a new matcher): `best` rebuilds them. */
  private stale = true;

  constructor(
    corpus: MatchCorpus & { index: CorpusIndex },
    private readonly options: LiveMatcherOptions,
  ) {
    this.index = corpus.index;
    this.flat = corpus.flat;
    this.windowGrains = toGrains(options.windowBeats);
    this.grids = options.mode.tolerance > 0 ? [FINE_GRAINS, COARSE_GRAINS] : [FINE_GRAINS];
    const streamed: CandidateSource = { name: 'stream', best: (window, verify, spanGrains) => this.streamBest(window, verify, spanGrains) };
    this.stages = stagesOf(corpus, streamed, options.mode);
    this.count = pieceCountOf(corpus, options.mode, true);
  }

  /** Adds a played point (ontime in grains ≥ 0, pitch in the index's dimension). */
  add(point: Point): void {
    if (this.stale) return;
    if (point.at < this.origin || point.at - this.origin > REBASE_GRAINS || this.voters.some((v) => snapTo(point.at, v.grains) < v.newest)) {
      this.stale = true;
      return;
    }
    for (const v of this.voters) {
      v.newest = snapTo(point.at, v.grains);
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

  /**
   * Plays the warm-up passages (`warmUpPassages`) through the matcher, note
   * by note as a listener would, then forgets them. A listener calls it once
   * after loading; the daemon's scorer plays the same passages through the
   * whole verdict instead (bridge/daemon/live-scorer.ts).
   */
  warmUp(): void {
    for (const passage of warmUpPassages(this.flat)) {
      const window: Point[] = [];
      this.reset();
      for (const point of passage) {
        window.push(point);
        while (window[0].at <= point.at - this.windowGrains) window.shift();
        this.add(point);
        this.expire(window[0].at);
        this.best({ points: window, startGrains: window[0].at });
      }
    }
    this.reset();
  }

  /** Votes from nothing but `window`, with times counted from its start. */
  private rebuild(window: readonly Point[], startGrains: number): void {
    if (this.voters.length === 0) this.voters = this.grids.map((grains) => ({ grains, stream: new StreamingMatch(this.index, { windowBeats: this.options.windowBeats, tableBits: this.options.tableBits }), newest: -Infinity }));
    for (const v of this.voters) {
      v.stream.clear();
      v.newest = -Infinity;
    }
    this.origin = snapDown(Math.min(startGrains, window[0].at), COARSE_GRAINS);
    this.stale = false;
    for (const p of window) this.add(p);
    this.expire(startGrains);
  }

  /** The streamed candidates' best, verified. */
  private streamBest(window: MatchWindow, verify: Stage['verify'], spanGrains: number): WindowMatch | null {
    // One shared triple is three notes in common: worth a look only in a window too small for more.
    const atLeast = window.points.length > SCAN_POINTS ? 2 : 1;
    const voted = this.voters.flatMap((v) => v.stream.translations(LIVE_CANDIDATES, atLeast)).map((t) => ({ ...t, shift: t.shift + this.origin }));
    return verifyAll({ points: window.points, startGrains: window.startGrains, spanGrains }, candidatesOf(voted, toGrains(verify.toleranceBeats)), verify);
  }

  /** The best verified match of a window (sorted points, ontimes in [startGrains, startGrains + W)), with its distinctiveness. */
  best(window: MatchWindow): WindowMatch | null {
    if (window.points.length === 0) return null;
    if (this.stale) this.rebuild(window.points, window.startGrains);
    return bestOfStages(this.stages, window, this.windowGrains, this.options.mode, this.count);
  }

  /**
   * The best match of each trailing stretch of the window (core/stretch.ts),
   * among the translations the votes propose now, verified as the window's
   * plain stage verifies.
   */
  stretches(window: MatchWindow, lengths: readonly number[]): StretchMatch[] {
    if (window.points.length === 0) return [];
    if (this.stale) this.rebuild(window.points, window.startGrains);
    const verify = this.stages[0].verify;
    const voted = this.voters.flatMap((v) => v.stream.translations(STRETCH_CANDIDATES)).map((t) => ({ ...t, shift: t.shift + this.origin }));
    return stretchMatches(window, candidatesOf(voted, toGrains(verify.toleranceBeats)), verify, lengths);
  }

  /** The distinctiveness of a stretch's match (of a window of `points`), counted through the index. */
  stretchDistinctiveness(points: readonly Point[], s: StretchMatch): number {
    if (!s.match) return 0;
    const stretch = points.filter((p) => p.at >= s.startGrains);
    return matchDistinctiveness(this.count, { points: stretch, startGrains: s.startGrains }, s.endGrains - s.startGrains + 1, s.match);
  }
}
