/**
 * The corpus index's filter-and-verify matcher (core/index-match.ts) against
 * the brute-force reference (core/match.ts exactMatcher) on the same
 * windows: on seeded synthetic corpora and on four-part chorales from the
 * open JSB chorales dataset (test/fixtures/jsb, source note in its README).
 * Wherever the exact score is ≥ 0.5 the index must find it; nowhere may it
 * score above it.
 *
 * @example
 *   npx vitest run test/core/index-match.test.ts
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { type Point, comparePoints, toGrains } from '../../core/note.js';
import { type CorpusPoints, corpusPoints } from '../../core/corpus.js';
import type { WindowMatch, WindowMatcher } from '../../core/match.js';
import { exactMatcher, indexedMatcher } from '../helpers/matchers.js';
import { windows } from '../../core/windows.js';
import { seededRandom } from '../../core/stats.js';
import { type CorpusIndex, buildTriples, corpusIndex, flattenPoints, pieceAt } from '../../core/triple-index.js';
import { DEFAULT_FILTER, indexCandidates, scanBest, wideBudgetFor } from '../../core/index-match.js';
import { verifier } from '../../core/verify.js';
import { windowMatcher } from '../../core/pipeline.js';
import { synthCorpus, unrelated } from '../bench/synthetic.js';
import { corpusOf, pieceOf } from '../helpers/corpus.js';
import { loadChorales } from '../helpers/jsb.js';
import { pointSet, shift } from '../helpers/points.js';

const W = 16;

function indexOf(view: Pick<CorpusPoints, 'mode' | 'points' | 'pieces'>): CorpusIndex {
  return corpusIndex(buildTriples(flattenPoints(view)));
}

const viewOf = (points: Point[][]): CorpusPoints => ({ mode: 'chromatic', pieces: points.map((_, i) => pieceOf(`p${i}.mid`, [])), points, size: points.flat().length });

/** A query made of a corpus passage: moved, transposed, and with a share of its pitches changed by a step. */
function copyOf(points: readonly Point[], { from, beats, move, transpose, alter, seed }: { from: number; beats: number; move: number; transpose: number; alter: number; seed: number }): Point[] {
  const rand = seededRandom(seed);
  const out = points
    .filter((p) => p.at >= toGrains(from) && p.at < toGrains(from + beats))
    .map((p) => ({ at: p.at - toGrains(from) + toGrains(move), pitch: p.pitch + transpose + (rand() < alter ? (rand() < 0.5 ? 1 : -1) : 0) }))
    .sort(comparePoints);
  return out.filter((p, i) => i === 0 || comparePoints(out[i - 1], p) !== 0);
}

interface Compared {
  window: Point[];
  start: number;
  exact: WindowMatch | null;
  indexed: WindowMatch | null;
}

function compare(queries: readonly Point[][], exact: WindowMatcher, indexed: WindowMatcher, exclude?: number): Compared[] {
  return queries.flatMap((q) =>
    windows(q, { window: W, hop: 8 }).map((w) => {
      const start = toGrains(w.start);
      return { window: w.points, start, exact: exact.best({ points: w.points, startGrains: start, exclude }), indexed: indexed.best({ points: w.points, startGrains: start, exclude }) };
    }),
  );
}

/** The checks every comparison makes; returns the share of strong windows whose match is the same to the letter. */
function expectAgreement(rows: readonly Compared[]): { strong: number; identical: number } {
  let strong = 0;
  let identical = 0;
  for (const r of rows) {
    const e = r.exact?.score ?? 0;
    expect(r.indexed?.score ?? 0).toBeLessThanOrEqual(e);
    if (e < 0.5) continue;
    strong++;
    expect(r.indexed?.score).toBe(e);
    if (JSON.stringify(r.indexed) === JSON.stringify(r.exact)) identical++;
  }
  return { strong, identical };
}

describe('indexed matching equals exact matching wherever the exact score is ≥ 0.5', () => {
  const corpus = synthCorpus({ notes: 6_000, seed: 11 });
  const view = viewOf(corpus);
  const exact = exactMatcher(view, W);
  const indexed = indexedMatcher(view, W);

  it('on verbatim, transposed and 20%-altered copies of a seeded synthetic corpus, and on unrelated material', () => {
    const queries = [
      copyOf(corpus[1], { from: 20, beats: 40, move: 4, transpose: 5, alter: 0, seed: 1 }),
      copyOf(corpus[3], { from: 61.5, beats: 40, move: 0, transpose: -7, alter: 0.2, seed: 2 }),
      copyOf(corpus[4], { from: 10, beats: 32, move: 3.25, transpose: 2, alter: 0.2, seed: 3 }),
      unrelated(77, 40),
    ];
    const rows = compare(queries, exact, indexed);
    const { strong, identical } = expectAgreement(rows);
    expect(strong).toBeGreaterThanOrEqual(10);
    // Same piece, excerpt and transposition too, but for ties between equally good places the filter did not verify.
    expect(identical / strong).toBeGreaterThanOrEqual(0.9);
  });

  it('on random point sets, down to windows of a single point', () => {
    const small = viewOf(synthCorpus({ notes: 1_500, seed: 5 }));
    const ex = exactMatcher(small, W);
    const ix = indexedMatcher(small, W);
    fc.assert(
      fc.property(pointSet({ min: 1, max: 30 }), fc.integer({ min: 0, max: 40 }), (points, startBeat) => {
        const window = shift(points, startBeat, 0);
        const start = toGrains(startBeat);
        const e = ex.best({ points: window, startGrains: start });
        const i = ix.best({ points: window, startGrains: start });
        expect(i?.score ?? 0).toBeLessThanOrEqual(e?.score ?? 0);
        if ((e?.score ?? 0) >= 0.5) expect(i?.score).toBe(e!.score);
      }),
      { numRuns: 60, seed: 3 },
    );
  });

  it('a window of at most eight points is scanned: the exact match to the letter wherever it scores ≥ 0.5', () => {
    const pieces = synthCorpus({ notes: 3_000, seed: 8 });
    const small = viewOf(pieces);
    const ex = exactMatcher(small, W);
    const index = indexOf(small);
    // The first and last few points of each piece, moved: where small windows score high.
    const edges = pieces.flatMap((p) => [1, 2, 3, 4, 6, 8].flatMap((k) => [p.slice(0, k), p.slice(-k)]).map((pts) => shift(pts, 8 - pts[0].at / toGrains(1), 3)));
    let strong = 0;
    const check = (window: Point[], startBeat: number): void => {
      const e = ex.best({ points: window, startGrains: toGrains(startBeat) });
      const s = scanBest(index, { points: window, startGrains: toGrains(startBeat), spanGrains: toGrains(W) });
      expect(s?.score ?? 0).toBeLessThanOrEqual(e?.score ?? 0);
      if ((e?.score ?? 0) >= 0.5) {
        strong++;
        expect(s).toEqual(e);
      }
    };
    for (const window of edges) for (const startBeat of [0, 4, 8]) check(window, startBeat);
    fc.assert(
      fc.property(pointSet({ min: 1, max: 8 }), fc.integer({ min: 0, max: 40 }), (points, startBeat) => check(shift(points, startBeat, 0), startBeat)),
      { numRuns: 100, seed: 4 },
    );
    expect(strong).toBeGreaterThanOrEqual(20);
  });

  it('a window whose first look finds no match of 0.5 looks again, wider; one that found one is left as it was', () => {
    const queries = [
      copyOf(corpus[3], { from: 61.5, beats: 40, move: 0, transpose: -7, alter: 0.2, seed: 2 }),
      copyOf(corpus[4], { from: 10, beats: 32, move: 3.25, transpose: 2, alter: 0.3, seed: 3 }),
      copyOf(corpus[0], { from: 30, beats: 40, move: 1, transpose: 4, alter: 0.4, seed: 4 }),
      unrelated(78, 40),
    ];
    // A first look too narrow to be sure (few postings, one candidate), so the second has something to find.
    const narrow = { ...DEFAULT_FILTER, voteBudget: 0, minTriples: 1, candidates: 1 };
    const once = compare(queries, exact, indexedMatcher(view, W, { filter: { ...narrow, widenBelow: 0 } }));
    const twice = compare(queries, exact, indexedMatcher(view, W, { filter: { ...narrow, wideBudget: 2_000, wideCandidates: 16, wideVotes: 2 } }));
    let found = [0, 0];
    once.forEach((r, i) => {
      const [a, b] = [r.indexed?.score ?? 0, twice[i].indexed?.score ?? 0];
      if (a >= 0.5) expect(twice[i].indexed).toEqual(r.indexed);
      expect(b).toBeGreaterThanOrEqual(a);
      expect(b).toBeLessThanOrEqual(r.exact?.score ?? 0);
      if ((r.exact?.score ?? 0) >= 0.5) found = [found[0] + Number(a === r.exact!.score), found[1] + Number(b === r.exact!.score)];
    });
    // Both looks matter here: the first alone finds some of the strong windows, the second the rest.
    expect(found[0]).toBeGreaterThan(0);
    expect(found[1]).toBeGreaterThan(found[0]);
  });

  it('the second look is taken of the window last voted for, and a strong match from any stage spares it', () => {
    const source = indexCandidates(indexOf(view), { ...DEFAULT_FILTER, voteBudget: 0, minTriples: 1, candidates: 1, wideBudget: 2_000, wideCandidates: 16, wideVotes: 2 });
    const verify = verifier(flattenPoints(view), 0);
    const [a, b] = [0, 1].map((k) => ({ points: shift(corpus[k].filter((p) => p.at >= toGrains(20) && p.at < toGrains(20 + W)), 0, 2), startGrains: 0 }));
    const first = source.best(a, verify, toGrains(W));
    const strong: WindowMatch = { piece: 9, pieceStart: 0, transposition: 0, matched: a.points.length, excerptNotes: a.points.length, score: 1 };
    expect(source.widen!(a, verify, strong)).toBe(strong);
    expect((source.widen!(a, verify, first)?.score ?? 0)).toBeGreaterThanOrEqual(first?.score ?? 0);
    expect(() => source.widen!(b, verify, null)).toThrow(/other than the last one voted for/);
  });

  it('`exclude` leaves the piece out, as the human baseline needs', () => {
    const query = [copyOf(corpus[2], { from: 0, beats: 48, move: 0, transpose: 0, alter: 0, seed: 9 })];
    const rows = compare(query, exact, indexed, 2);
    expectAgreement(rows);
    for (const r of rows) expect(r.indexed?.piece).not.toBe(2);
    // Without the exclusion the windows the copy fills find their own piece, fully.
    const own = compare(query, exact, indexed).filter((r) => r.start + toGrains(W) <= toGrains(48));
    expect(own).toHaveLength(5);
    for (const r of own) expect([r.indexed?.piece, r.indexed?.score]).toEqual([2, 1]);
  });

  it('postings read a key at a time, as from an index file opened on demand, answer as postings in memory, reading only the keys voted from', () => {
    const flat = flattenPoints(view);
    const postings = buildTriples(flat);
    let read = 0;
    const onDemand = corpusIndex({ ...postings, anchors: (from, to) => ((read += to - from), postings.anchors.slice(from, to)) });
    const match = (index: CorpusIndex) => windowMatcher({ flat, index }, { windowBeats: W, mode: { tolerance: 0.1, tempoFree: false }, candidates: 'index' });
    const query = copyOf(corpus[3], { from: 8, beats: 32, move: 0, transpose: 3, alter: 0.2, seed: 4 });
    const ws = windows(query, { window: W, hop: 4 });
    expect(ws.map((w) => match(onDemand).best({ points: w.points, startGrains: toGrains(w.start) }))).toEqual(ws.map((w) => match(corpusIndex(postings)).best({ points: w.points, startGrains: toGrains(w.start) })));
    expect(read).toBeGreaterThan(0);
    expect(read).toBeLessThan(postings.anchors.length);
    const damaged = corpusIndex({ ...postings, anchors: (from, to) => new Uint32Array(to - from).fill(flat.at.length) });
    expect(() => match(damaged).best({ points: ws[0].points, startGrains: toGrains(ws[0].start) })).toThrow(`names point ${flat.at.length}, but the index holds ${flat.at.length} points`);
  });
});

describe('on the JSB chorales (open dataset, test/fixtures/jsb)', () => {
  const { train, test } = loadChorales();
  const view = corpusPoints(corpusOf(train.slice(0, 40).map((c) => pieceOf(`${c.path}.mid`, c.notes))), 'chromatic');
  const exact = exactMatcher(view, W);
  const indexed = indexedMatcher(view, W);

  it('chorale passages, transposed or with 20% of pitches altered, and unseen chorales', () => {
    const queries = [
      copyOf(view.points[3], { from: 8, beats: 32, move: 0, transpose: 3, alter: 0, seed: 1 }),
      copyOf(view.points[17], { from: 16, beats: 32, move: 2, transpose: -2, alter: 0.2, seed: 2 }),
      copyOf(view.points[29], { from: 0, beats: 32, move: 0, transpose: 0, alter: 0.2, seed: 3 }),
      ...test.map((c) => corpusPoints(corpusOf([pieceOf('held-out.mid', c.notes)]), 'chromatic').points[0]),
    ];
    const rows = compare(queries, exact, indexed);
    const { strong, identical } = expectAgreement(rows);
    expect(strong).toBeGreaterThanOrEqual(6);
    expect(identical / strong).toBeGreaterThanOrEqual(0.9);
  });
});

describe('the second look reads more of a larger corpus', () => {
  it('its budget as set up to a million notes, √(notes / 1M) times it beyond', () => {
    expect(wideBudgetFor(DEFAULT_FILTER, 80_000)).toBe(DEFAULT_FILTER.wideBudget);
    expect(wideBudgetFor(DEFAULT_FILTER, 1_000_000)).toBe(DEFAULT_FILTER.wideBudget);
    expect(wideBudgetFor(DEFAULT_FILTER, 4_000_000)).toBe(2 * DEFAULT_FILTER.wideBudget);
    expect(wideBudgetFor({ ...DEFAULT_FILTER, wideBudget: 100 }, 9_000_000)).toBe(300);
  });
});

describe('the piece a corpus point belongs to', () => {
  it('is found by its offsets, empty pieces skipped, as a linear walk finds it', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 5 }), { minLength: 1, maxLength: 30 }), (sizes) => {
        const offsets = Uint32Array.from([0, ...sizes.map((_, p) => sizes.slice(0, p + 1).reduce((s, n) => s + n, 0))]);
        const walked = sizes.flatMap((n, p) => Array.from({ length: n }, () => p));
        expect(walked.map((_, i) => pieceAt(offsets, i))).toEqual(walked);
      }),
    );
  });
});
