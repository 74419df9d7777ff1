/**
 * The streaming index (core/stream.ts) as a candidate source: notes added
 * one at a time and expired as the window moves must vote, for the window
 * they leave, for translations whose verified best is the reference's score
 * of that window (wherever it is ≥ 0.5), and never more.
 *
 * @example
 *   npx vitest run test/core/stream.test.ts
 */
import { describe, expect, it } from 'vitest';
import { type Point, comparePoints, toGrains } from '../../core/note.js';
import type { CorpusPoints } from '../../core/corpus.js';
import type { WindowMatch } from '../../core/match.js';
import { seededRandom } from '../../core/stats.js';
import { buildTriples, corpusIndex, flattenPoints } from '../../core/triple-index.js';
import { DEFAULT_FILTER, SCAN_POINTS, candidatesOf, scanBest, verifyAll } from '../../core/index-match.js';
import { verifier } from '../../core/verify.js';
import { DEFAULT_STREAM, StreamingMatch } from '../../core/stream.js';
import { indexedMatcher } from '../helpers/matchers.js';
import { synthCorpus, unrelated } from '../bench/synthetic.js';
import { pieceOf } from '../helpers/corpus.js';
import { W, corpus, exact, index, session, view } from '../helpers/session.js';

/** The stream's candidates verified exactly on the window it holds, as the live matcher verifies them (a window of at most SCAN_POINTS scanned). */
function streamBest(stream: StreamingMatch, window: readonly Point[], start: number, on = index): WindowMatch | null {
  if (window.length === 0) return null;
  const span = { points: window, startGrains: start, spanGrains: toGrains(W) };
  if (window.length <= SCAN_POINTS) return scanBest(on, span);
  return verifyAll(span, candidatesOf(stream.translations(DEFAULT_FILTER.candidates), 0), verifier(on.points, 0));
}

describe('streaming matches equal exact matches of the same window', () => {
  it('after every note of a session, for the window of the last 16 beats', () => {
    const stream = new StreamingMatch(index, { windowBeats: W });
    const played = session();
    let strong = 0;
    for (const [n, p] of played.entries()) {
      stream.add(p);
      const start = p.at - toGrains(W) + 1;
      stream.expire(start);
      if (n % 6 !== 0) continue; // exact is slow; every sixth note is plenty
      const window = played.slice(0, n + 1).filter((q) => q.at >= start);
      expect(stream.size).toBe(window.length);
      const e = exact.best({ points: window, startGrains: start });
      const s = streamBest(stream, window, start);
      expect(s?.score ?? 0).toBeLessThanOrEqual(e?.score ?? 0);
      if ((e?.score ?? 0) >= 0.5) {
        strong++;
        expect(s?.score).toBe(e!.score);
      }
    }
    expect(strong).toBeGreaterThan(10);
  });

  it('a fresh stream fed a window equals the batch matcher on it', () => {
    const batch = indexedMatcher(view, W);
    const played = session();
    for (const startBeat of [100, 108, 116, 156, 164]) {
      const start = toGrains(startBeat);
      const window = played.filter((q) => q.at >= start && q.at < start + toGrains(W));
      const stream = new StreamingMatch(index, { windowBeats: W });
      for (const p of window) stream.add(p);
      stream.expire(start);
      const e = exact.best({ points: window, startGrains: start })!;
      expect(e.score).toBeGreaterThanOrEqual(0.5);
      expect(streamBest(stream, window, start)).toEqual(batch.best({ points: window, startGrains: start }));
      expect(streamBest(stream, window, start)!.score).toBe(e.score);
    }
  });

  it('forgets everything it expired: an emptied window scores nothing, and a new passage scores as if fresh', () => {
    const stream = new StreamingMatch(index, { windowBeats: W });
    const played = session();
    for (const p of played.filter((q) => q.at < toGrains(116))) stream.add(p);
    stream.expire(toGrains(200));
    expect(stream.size).toBe(0);
    expect(stream.translations(16)).toEqual([]);
    const later = played.filter((q) => q.at >= toGrains(100) && q.at < toGrains(116)).map((q) => ({ at: q.at + toGrains(100), pitch: q.pitch }));
    const fresh = new StreamingMatch(index, { windowBeats: W });
    fresh.expire(toGrains(200));
    for (const p of later) {
      stream.add(p);
      fresh.add(p);
    }
    expect(streamBest(stream, later, toGrains(200))).toEqual(streamBest(fresh, later, toGrains(200)));
    expect(streamBest(stream, later, toGrains(200))!.score).toBe(1);
  });

  it('no note reads more than noteCap postings as it comes, and expiring takes back just those; a note whose every triple is commoner votes nothing', () => {
    /** The index with its postings counted as they are read: a vote reads a posting's packed ontime (an even entry of `posted`) once. */
    const counting = (): { index: typeof index; reads: () => number } => {
      let n = 0;
      const posted = new Proxy(index.posted, { get: (a, k) => (typeof k === 'string' && /^\d+$/.test(k) ? (Number(k) % 2 === 0 && n++, a[Number(k)]) : Reflect.get(a, k)) });
      return { index: { ...index, posted }, reads: () => n };
    };
    const played = session();
    /** Over the session: the most postings one add() read, and all that add() and expire() read (the last expire empties the window). */
    const cost = (noteCap: number): { most: number; added: number; expired: number } => {
      const { index: counted, reads } = counting();
      const stream = new StreamingMatch(counted, { windowBeats: W, settings: { ...DEFAULT_STREAM, noteCap } });
      const out = { most: 0, added: 0, expired: 0 };
      for (const [i, p] of played.entries()) {
        let before = reads();
        stream.add(p);
        out.most = Math.max(out.most, reads() - before);
        out.added += reads() - before;
        before = reads();
        stream.expire(i === played.length - 1 ? p.at + 1 : p.at - toGrains(W) + 1);
        out.expired += reads() - before;
      }
      return out;
    };
    const uncapped = cost(Infinity);
    const cap = Math.floor(uncapped.most / 2);
    expect(cap).toBeLessThan(DEFAULT_STREAM.noteBudget);
    const capped = cost(cap);
    expect(capped.most).toBeLessThanOrEqual(cap);
    expect(capped.added).toBeLessThan(uncapped.added);
    expect([capped.expired, uncapped.expired]).toEqual([capped.added, uncapped.added]);
    // With a cap below every triple's postings nothing votes: a window too big to scan finds nothing.
    const silent = new StreamingMatch(index, { windowBeats: W, settings: { ...DEFAULT_STREAM, noteCap: 0 } });
    const window = played.filter((q) => q.at >= toGrains(100) && q.at < toGrains(116));
    silent.expire(toGrains(100));
    for (const p of window) silent.add(p);
    expect(window.length).toBeGreaterThan(SCAN_POINTS);
    expect(silent.translations(16)).toEqual([]);
  });

  it('ranks once per change of votes: asked deep first, then shallow, it answers as a stream asked only that', () => {
    // A scoring pass asks for 16 with at least 2 votes (the window) and for 32 (the stretches); once a stream has been asked 32 deep, every answer until the votes change comes from one ranking.
    const played = session();
    const often = new StreamingMatch(index, { windowBeats: W });
    /** A stream fed the first `upTo` + 1 notes, its window then started `later` grains later, asked once. */
    const fresh = (n: number, atLeast: number, upTo: number, later = 0): ReturnType<StreamingMatch['translations']> => {
      const once = new StreamingMatch(index, { windowBeats: W });
      for (const p of played.slice(0, upTo + 1)) {
        once.add(p);
        once.expire(p.at - toGrains(W) + 1);
      }
      once.expire(played[upTo].at - toGrains(W) + 1 + later);
      return once.translations(n, atLeast);
    };
    let compared = 0;
    for (const [n, p] of played.entries()) {
      often.add(p);
      often.expire(p.at - toGrains(W) + 1);
      const deep = often.translations(32);
      const shallow = often.translations(16, 2);
      if (n % 25 !== 0) continue;
      expect(deep).toEqual(fresh(32, 1, n));
      expect(shallow).toEqual(fresh(16, 2, n));
      expect(often.translations(16)).toEqual(deep.slice(0, 16));
      const floored = often.translations(32, 2);
      expect(floored).toEqual(fresh(32, 2, n));
      expect(floored).toEqual(deep.filter((t) => t.votes >= 2));
      if (floored.length > 0 && floored.length < deep.length) compared++;
    }
    // Windows where the vote floor left out some of the deep ranking: the filter was exercised, not only the cut.
    expect(compared).toBeGreaterThan(3);
    // Notes leaving with none coming (a rest) take their votes out of the ranking too.
    const last = played.length - 1;
    often.expire(played[last].at - toGrains(W) + 1 + toGrains(W / 2));
    const after = often.translations(32);
    expect(after).toEqual(fresh(32, 1, last, toGrains(W / 2)));
    expect(after).not.toEqual(fresh(32, 1, last));
  });

  it('says what is wrong with out-of-order or out-of-range input', () => {
    const stream = new StreamingMatch(index, { windowBeats: W });
    stream.add({ at: toGrains(4), pitch: 60 });
    expect(() => stream.add({ at: toGrains(3), pitch: 60 })).toThrow(/time order/);
    expect(() => stream.add({ at: toGrains(5), pitch: 300 })).toThrow(/pitch of 0…255/);
    expect(() => new StreamingMatch(index, { windowBeats: 0 })).toThrow(/positive number of beats/);
  });
});
