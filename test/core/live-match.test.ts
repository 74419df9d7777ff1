/**
 * The live matcher (core/live-match.ts): the streaming index's candidates,
 * verified on the window as played. Against the brute force of core/match.ts
 * (exact) and core/tolerance.ts (within a tolerance) on the same windows: it
 * never scores above them, and equals the exact score of every window of
 * more than eight points scoring ≥ 0.5. Data: seeded synthetic corpora
 * (test/bench/synthetic.ts) and JSB chorales (test/fixtures/jsb/README.md).
 */
import { describe, expect, it } from 'vitest';
import { type Point, GRAINS_PER_BEAT, comparePoints, toGrains, toPoints } from '../../core/note.js';
import { type CorpusPoints, corpusPoints } from '../../core/corpus.js';
import { seededRandom } from '../../core/stats.js';
import { buildTriples, corpusIndex, flattenPoints } from '../../core/triple-index.js';
import { SCAN_POINTS, candidatesOf } from '../../core/index-match.js';
import { LiveMatcher, WARM_UP_PASSAGES, WARM_UP_POINTS, warmUpPassages } from '../../core/live-match.js';
import { exactMatcher, matchCorpusOf } from '../helpers/matchers.js';
import { synthCorpus, unrelated } from '../bench/synthetic.js';
import { pieceOf } from '../helpers/corpus.js';
import { chorales, passage, played } from '../helpers/material.js';
import { W, exact, session, view } from '../helpers/session.js';

const sessionCorpus = matchCorpusOf(view);
const mode = (tolerance: number) => ({ tolerance, tempoFree: false });


/** Plays `points` into a matcher one at a time, the window being the last W beats; calls `look` with each window. */
function play(live: LiveMatcher, points: readonly Point[], look: (window: Point[], start: number, n: number) => void): void {
  const window: Point[] = [];
  for (const [n, p] of points.entries()) {
    window.push(p);
    while (window[0].at <= p.at - toGrains(W)) window.shift();
    live.add(p);
    live.expire(window[0].at);
    look(window, window[0].at, n);
  }
}

describe('exact (tolerance 0)', () => {
  it('after every note of a session: never above the brute force, equal to it wherever it is ≥ 0.5 on more than eight points', () => {
    let strong = 0;
    play(new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0) }), session(), (window, start, n) => {
      if (n % 5 !== 0) return; // the brute force is slow; every fifth note is plenty
      const e = exact.best({ points: window, startGrains: start });
      const m = new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0) });
      const live = m.best({ points: window, startGrains: start }); // a fresh matcher rebuilds its votes from the window
      expect(live?.score ?? 0).toBeLessThanOrEqual(e?.score ?? 0);
      if ((e?.score ?? 0) >= 0.5 && window.length > SCAN_POINTS) {
        strong++;
        expect(live).toMatchObject({ piece: e!.piece, pieceStart: e!.pieceStart, transposition: e!.transposition, score: e!.score });
        expect(live!.distinctiveness).toBeGreaterThan(0);
      }
    });
    expect(strong).toBeGreaterThan(10);
  });

  it('streamed votes and votes rebuilt from the window give the same answer', () => {
    const streamed = new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0) });
    play(streamed, session(), (window, start, n) => {
      if (n % 7 === 0) expect(streamed.best({ points: window, startGrains: start })).toEqual(new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0) }).best({ points: window, startGrains: start }));
    });
  });

  it('a note arriving late (before the newest) is put in its place: the answer is the in-order one', () => {
    const window = session().filter((p) => p.at >= toGrains(100) && p.at < toGrains(116));
    const start = window[0].at;
    const inOrder = new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0) });
    for (const p of window) inOrder.add(p);
    const late = new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0) });
    const held = window[5];
    for (const p of window) if (p !== held) late.add(p);
    late.add(held);
    late.expire(start);
    expect(late.best({ points: window, startGrains: start })).toEqual(inOrder.best({ points: window, startGrains: start }));
    expect(late.best({ points: window, startGrains: start })!.score).toBe(1);
  });

  it('reset forgets the passage; a session days long still matches (times kept relative to an origin)', () => {
    const live = new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0) });
    const passage = session().filter((p) => p.at >= toGrains(100) && p.at < toGrains(116));
    for (const p of passage) live.add(p);
    live.reset();
    expect(live.best({ points: [{ at: 0, pitch: 60 }], startGrains: 0 })).toBeNull();
    // 600,000 beats in: past what 32-bit grains can hold.
    const far = toGrains(600_000);
    const later = passage.map((p) => ({ at: p.at + far, pitch: p.pitch }));
    for (const p of later) live.add(p);
    live.expire(later[0].at);
    const m = live.best({ points: later, startGrains: later[0].at })!;
    const e = exact.best({ points: passage, startGrains: passage[0].at })!;
    expect(m).toMatchObject({ piece: e.piece, pieceStart: e.pieceStart, transposition: e.transposition, score: 1 });
  });

  it('a note before the window start, or before the first note it voted with, is taken in stride', () => {
    const passage = session().filter((p) => p.at >= toGrains(100) && p.at < toGrains(116));
    const start = passage[0].at;
    const early = [{ at: start - toGrains(0.05), pitch: 40 }, ...passage];
    expect(new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0.1) }).best({ points: early, startGrains: start })).toMatchObject({ score: expect.any(Number) });
    const live = new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(0) });
    live.best({ points: passage.slice(5), startGrains: passage[5].at });
    live.add(passage[0]);
    expect(live.best({ points: passage, startGrains: start })!.score).toBe(1);
  });

  it('refuses a tolerance it cannot use', () => {
    expect(() => new LiveMatcher(sessionCorpus, { windowBeats: W, mode: mode(1) })).toThrow(/tolerance must be at least 0 and under 1 beat/);
  });
});

describe('within a tolerance, on chorales played with human timing', () => {
  const { corpus: choraleCorpus } = chorales();
  const choraleView = corpusPoints(choraleCorpus, 'chromatic');
  const choraleCorpusMatch = matchCorpusOf(choraleView);
  const brute = exactMatcher(choraleView, 8, { mode: mode(0.1) });

  it.each([0.06, 0.1])('a phrase played ±%s beat, 10% dropped, not snapped: found in its piece, never above the brute force', (jitter) => {
    let found = 0;
    const pieces = [3, 9, 15, 21, 27, 33];
    for (const piece of pieces) {
      const take = toPoints(played(passage(choraleCorpus.pieces[piece].notes, 8, 16, 1), { jitter, drop: 0.1, seed: piece }));
      const live = new LiveMatcher(choraleCorpusMatch, { windowBeats: 8, mode: mode(0.1) });
      for (const p of take) live.add(p);
      const start = take[0].at;
      const m = live.best({ points: take, startGrains: start })!;
      const b = brute.best({ points: take, startGrains: start })!;
      expect(m.score).toBeLessThanOrEqual(b.score);
      if (m.piece === piece && m.score >= 0.7) found++;
    }
    expect(found).toBe(pieces.length);
  });
});

describe('tempo-free, note by note, on chorales played at another tempo (test/fixtures/jsb/README.md)', () => {
  const { corpus: choraleCorpus } = chorales();
  const choraleCorpusMatch = matchCorpusOf(corpusPoints(choraleCorpus, 'chromatic'));

  it.each([1.5, 0.75, 2])('a passage played %s× as long: once the window holds it, found with the time scale within 2%', (scale) => {
    for (const piece of [2, 14, 26]) {
      // Beats 8–40 of the chorale at the new tempo, a 16-beat window streamed over it as a performer plays it.
      const take = toPoints(played(passage(choraleCorpus.pieces[piece].notes, 8, 40), { scale, seed: piece, jitter: 0.02 }));
      const live = new LiveMatcher(choraleCorpusMatch, { windowBeats: W, mode: { tolerance: 0.1, tempoFree: true } });
      let last: ReturnType<LiveMatcher['best']> = null;
      play(live, take.filter((p) => p.at < toGrains(Math.min(32, 32 * scale))), (window, start) => {
        last = live.best({ points: window, startGrains: start });
      });
      const m = last!;
      expect(m.piece).toBe(piece);
      expect(m.transposition).toBe(0);
      expect(Math.abs(m.timeScale! / scale - 1)).toBeLessThan(0.02);
      expect(m.score).toBeGreaterThanOrEqual(0.8);
    }
  });

  it('a warmed-up matcher answers every window as a fresh one does: the warm-up leaves no votes behind', () => {
    const take = toPoints(played(passage(choraleCorpus.pieces[14].notes, 8, 40), { scale: 1.5, seed: 3, jitter: 0.02 }));
    const tempoFree = { windowBeats: W, mode: { tolerance: 0.1, tempoFree: true } };
    const warmed = new LiveMatcher(choraleCorpusMatch, tempoFree);
    warmed.warmUp();
    const cold = new LiveMatcher(choraleCorpusMatch, tempoFree);
    let compared = 0;
    play(warmed, take, (window, start) => {
      cold.add(window[window.length - 1]);
      cold.expire(start);
      const m = warmed.best({ points: window, startGrains: start });
      expect(m).toEqual(cold.best({ points: window, startGrains: start }));
      if (m && m.piece === 14) compared++;
    });
    expect(compared).toBeGreaterThan(20);
  });
});

describe('warmUpPassages', () => {
  // Synthetic corpus (test/bench/synthetic.ts): dozens of pieces, so the passages spread over them.
  const flatOf = (points: Point[][]) => flattenPoints({ mode: 'chromatic', points, pieces: [] });
  const flat = flatOf(synthCorpus({ notes: 12_000, seed: 5 }));
  const pieces = flat.offsets.length - 1;
  const passages = warmUpPassages(flat);
  const written = (piece: number): Point[] => {
    const from = flat.offsets[piece];
    const out: Point[] = [];
    for (let i = from; i < Math.min(flat.offsets[piece + 1], from + WARM_UP_POINTS); i++) out.push({ at: flat.at[i] - flat.at[from], pitch: flat.pitch[i] });
    return out;
  };
  const pieceOfPassage = (w: number) => Math.floor((w * pieces) / WARM_UP_PASSAGES);

  it('spreads its passages over the pieces, each from time 0, in time order, no point twice', () => {
    expect(passages).toHaveLength(WARM_UP_PASSAGES);
    expect(new Set(passages.map((_, w) => pieceOfPassage(w))).size).toBe(WARM_UP_PASSAGES);
    for (const p of passages) {
      expect(p[0].at).toBe(0);
      for (let i = 1; i < p.length; i++) expect(comparePoints(p[i - 1], p[i])).toBeLessThan(0);
    }
  });

  it('plays the corpus four ways: as written, pitches reversed, a fourth up and loose by 1/48 beat, every third note left out', () => {
    const tidy = (ps: Point[]) => [...ps].sort(comparePoints).filter((p, i, all) => i === 0 || comparePoints(all[i - 1], p) !== 0);
    const [asWritten, reversed, loose, thinned] = [0, 1, 2, 3].map((w) => written(pieceOfPassage(w)));
    expect(passages[0]).toEqual(tidy(asWritten));
    expect(passages[1]).toEqual(tidy(reversed.map((p, i) => ({ at: p.at, pitch: reversed[reversed.length - 1 - i].pitch }))));
    const off = GRAINS_PER_BEAT / 48;
    expect(passages[2]).toEqual(tidy(loose.map((p, i) => ({ at: Math.max(0, p.at + (i % 2 ? off : -off)), pitch: p.pitch + 5 }))));
    expect(passages[3]).toEqual(tidy(thinned.filter((_, i) => i % 3 !== 2)));
    // The four ways again, on other pieces.
    expect(passages[4]).toEqual(tidy(written(pieceOfPassage(4))));
  });

  it('a corpus of fewer pieces gets one passage each; an empty one none', () => {
    expect(warmUpPassages(flatOf([[{ at: 480, pitch: 60 }, { at: 960, pitch: 62 }]]))).toEqual([[{ at: 0, pitch: 60 }, { at: 480, pitch: 62 }]]);
    expect(warmUpPassages(flatOf([]))).toEqual([]);
  });
});

describe('candidatesOf', () => {
  const t = (piece: number, shift: number, dp: number) => ({ piece, shift, dp, votes: 1 });

  it('within a tolerance: one search for voted shifts of one piece and transposition close together, reaching past both ends', () => {
    // 0.1 beat = 384 grains; a voted shift may be off by half a coarse grid step (480 grains): runs no more than 864 apart join.
    const groups = candidatesOf([t(2, 1000, 5), t(2, 1500, 5), t(2, 3000, 5), t(2, 1500, 4), t(1, 1500, 5)], 384);
    expect(groups).toEqual([
      { piece: 1, dp: 5, shift: 1500, within: 864 },
      { piece: 2, dp: 4, shift: 1500, within: 864 },
      { piece: 2, dp: 5, shift: 1250, within: 1114 },
      { piece: 2, dp: 5, shift: 3000, within: 864 },
    ]);
  });

  it('exactly: every voted translation is a candidate of its own', () => {
    expect(candidatesOf([t(2, 1000, 5), t(2, 1001, 5)], 0)).toEqual([
      { piece: 2, shift: 1000, dp: 5, within: 0 },
      { piece: 2, shift: 1001, dp: 5, within: 0 },
    ]);
  });
});
