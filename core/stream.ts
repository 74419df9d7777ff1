/**
 * The streaming index: the live candidate source of the matching pipeline
 * (core/pipeline.ts), one note at a time.
 *
 * The stream keeps the window's points and running vote counts per
 * translation. A new point completes triples with the few points before it
 * (core/triple-index.ts); its rarest triples look up their postings and add
 * votes, and the stream remembers which, so that when a triple's first point
 * leaves the window the same votes are taken back. A note therefore costs
 * about the postings of its own triples, however long the window, and never
 * more than `noteCap` of them: in a large corpus even a note's rarest triple
 * can be a figure thousands of passages share, and such a note is left to
 * its neighbours' votes. `translations()` names the most-voted, for the
 * pipeline's verifier to score (core/live-match.ts).
 *
 * Points must come in time order (equal ontimes in any order; a point
 * already in the window is ignored, as in a point set). Choosing a point's
 * triples when it arrives means a window reached by streaming can vote a little
 * differently from the same window scored afresh.
 *
 * @example
 *   const stream = new StreamingMatch(index, { windowBeats: 16 });
 *   const W = toGrains(16);
 *   for (const p of played) {            // p = { at: grains since the session began, pitch }
 *     stream.add(p);
 *     stream.expire(p.at - W + 1);       // the window is now the last 16 beats, ending with p
 *     stream.translations(16, 2);        // → [{ piece: 7, shift: 30720, dp: 5, votes: 61 }, ...]
 *   }
 */
import { type Point, comparePoints, toGrains } from './note.js';
import { type CorpusIndex, MAX_GRAIN, MAX_PITCH } from './triple-index.js';
import { DEFAULT_FILTER, type VotedTranslation, TripleLookups, castVotes, topVoted } from './index-match.js';
import { VoteTable } from './votes.js';

export interface StreamSettings {
  /** How far back (in points) a new point's triples reach. */
  queryPartners: number;
  /** Postings a new point may read; its rarest triple is looked up even when that alone is more… */
  noteBudget: number;
  /**
   * …unless that is more than this many: a point whose every triple is that
   * common votes nothing, so no note reads more (at 10 million synthetic
   * notes the median note's rarest triple has about 1,500 postings; below a
   * million notes hardly any reaches 2,000).
   */
  noteCap: number;
}

export const DEFAULT_STREAM: StreamSettings = { queryPartners: DEFAULT_FILTER.queryPartners, noteBudget: 64, noteCap: 2_000 };

export class StreamingMatch {
  readonly windowBeats: number;
  private readonly horizon: number;
  private readonly settings: StreamSettings;
  /** The window's points, sorted, and for each the keys it anchored votes for. */
  private readonly points: Point[] = [];
  private readonly at: number[] = [];
  private readonly voted: number[][] = [];
  private readonly lookups = new TripleLookups();
  private readonly votes: VoteTable;
  private start = 0;
  /**
   * The most-voted translations, most first, as last ranked, or null once a
   * vote has changed: one scoring pass asks for them several times (the
   * window's stages, then the stretches), and each ranking reads the whole
   * vote table.
   * Ranked `depth` deep, the most any call has asked for.
   */
  private ranked: Readonly<VotedTranslation>[] | null = null;
  private depth = 0;

  /** `tableBits`: the vote table's starting size, 2^bits slots (core/votes.ts); it grows as it must. */
  constructor(private readonly index: CorpusIndex, options: { windowBeats: number; settings?: StreamSettings; tableBits?: number }) {
    if (!(Number.isFinite(options.windowBeats) && options.windowBeats > 0)) throw new RangeError(`windowBeats must be a positive number of beats, got ${options.windowBeats}`);
    this.windowBeats = options.windowBeats;
    this.horizon = toGrains(index.shape.horizonBeats);
    this.settings = options.settings ?? DEFAULT_STREAM;
    this.votes = new VoteTable(options.tableBits);
  }

  /** Points in the window now. */
  get size(): number {
    return this.points.length;
  }

  /** Adds a played point (ontime in integer grains, pitch in the index's dimension). */
  add(point: Point): void {
    const last = this.points[this.points.length - 1];
    if (!(Number.isInteger(point.at) && point.at >= 0 && point.at <= MAX_GRAIN) || !(Number.isInteger(point.pitch) && point.pitch >= 0 && point.pitch <= MAX_PITCH)) {
      throw new RangeError(`a point needs an ontime of 0…${MAX_GRAIN} whole grains and a pitch of 0…${MAX_PITCH}, got at ${point.at}, pitch ${point.pitch}`);
    }
    if (last && point.at < last.at) throw new RangeError(`points must come in time order: got one at ${point.at} grains after one at ${last.at}`);
    if (point.at < this.start) throw new RangeError(`a point at ${point.at} grains is before the window, which starts at ${this.start}`);
    let j = this.points.length;
    while (j > 0 && comparePoints(this.points[j - 1], point) > 0) j--;
    if (j > 0 && comparePoints(this.points[j - 1], point) === 0) return;
    this.points.splice(j, 0, { at: point.at, pitch: point.pitch });
    this.voted.splice(j, 0, []);
    this.at.splice(j, 0, point.at);
    this.ranked = null;
    this.lookups.clear();
    this.lookups.collect(this.index, this.points, this.at, 0, j, this.settings.queryPartners, this.horizon);
    const found = this.lookups.sort();
    const { starts } = this.index;
    for (let r = 0, spent = 0; r < found; r++) {
      const k = this.lookups.keyAt(r);
      const size = starts[k + 1] - starts[k];
      if (spent + size > this.settings.noteCap || (r > 0 && spent + size > this.settings.noteBudget)) break;
      spent += size;
      const a = this.lookups.anchorAt(r);
      castVotes(this.index, this.votes, this.points[a], k, 1);
      this.voted[a].push(k);
    }
  }

  /** Forgets every point and vote, keeping the tables: a new passage. */
  clear(): void {
    this.points.length = 0;
    this.at.length = 0;
    this.voted.length = 0;
    this.votes.clear();
    this.ranked = null;
    this.start = 0;
  }

  /** Starts the window at `beforeGrains`: earlier points leave it, taking back their votes. */
  expire(beforeGrains: number): void {
    let gone = 0;
    while (gone < this.points.length && this.points[gone].at < beforeGrains) {
      for (const k of this.voted[gone]) castVotes(this.index, this.votes, this.points[gone], k, -1);
      gone++;
    }
    if (gone > 0) this.ranked = null;
    this.points.splice(0, gone);
    this.at.splice(0, gone);
    this.voted.splice(0, gone);
    this.start = beforeGrains;
  }

  /**
   * The `n` most-voted translations so far with at least `atLeast` votes,
   * most first, for a caller that verifies them its own way (within a
   * tolerance, say): `shift` grains and `dp` steps from the corpus to the
   * played points. Until the votes change, every call answers from one
   * ranking, and its objects are shared between calls.
   */
  translations(n: number, atLeast = 1): Readonly<VotedTranslation>[] {
    if (n > this.depth) {
      this.depth = n;
      this.ranked = null;
    }
    this.ranked ??= topVoted(this.votes, this.depth);
    // Most first, ties in the order first voted for: the `n` best of those with `atLeast` votes lead the ranking.
    const out: Readonly<VotedTranslation>[] = [];
    for (const t of this.ranked) {
      if (out.length === n || t.votes < atLeast) break;
      out.push(t);
    }
    return out;
  }
}
