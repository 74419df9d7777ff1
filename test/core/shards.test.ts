/**
 * A corpus cut into shards matches as the one corpus (core/shards.ts):
 * with every translation, exactly or within a tolerance, each window's best
 * match, ties included, and its distinctiveness (pieces summed across
 * shards) equal the one corpus's, the baseline's left-out piece left out
 * wherever it sits. Random point sets (fast-check), ours.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { toGrains } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import { type MatchMode, windowMatcher } from '../../core/pipeline.js';
import { dealRuns, mergedMatcher, shardMatcher } from '../../core/shards.js';
import { corpusOf, pieceOf } from '../helpers/corpus.js';
import { notesOf, pointSet, shift } from '../helpers/points.js';
import { matchCorpusOf } from '../helpers/matchers.js';

const MODES: MatchMode[] = [
  { tolerance: 0, tempoFree: false },
  { tolerance: 0.1, tempoFree: false },
];

const viewOf = (pieces: readonly { at: number; pitch: number }[][]) =>
  corpusPoints(corpusOf(pieces.map((p, i) => pieceOf(`p${i}.mid`, notesOf(p.map((q): [number, number] => [q.at / toGrains(1), q.pitch]))))), 'chromatic');

describe('shards merged answer as the one corpus (fast-check)', () => {
  const corpusArb = fc.array(pointSet({ min: 3, max: 30, beats: 32 }), { minLength: 2, maxLength: 7 });

  it.each(MODES.map((m) => [`tolerance ${m.tolerance}`, m] as const))('%s: best match and distinctiveness, with a piece left out', (_, mode) => {
    fc.assert(
      fc.property(corpusArb, fc.integer({ min: 1, max: 4 }), fc.nat(6), fc.boolean(), fc.option(fc.nat(6)), (pieces, k, which, copy, left) => {
        const shards = Math.min(k, pieces.length);
        // A query that copies part of a piece (moved) or repeats another piece whole: ties across shards.
        const query = copy ? shift(pieces[which % pieces.length], 4, 2) : pieces[which % pieces.length];
        const exclude = left === null ? undefined : left % pieces.length;
        const one = windowMatcher(matchCorpusOf(viewOf(pieces)), { windowBeats: 16, mode, candidates: 'every' });
        const runs = dealRuns(pieces.map((p) => p.length), shards);
        const merged = mergedMatcher(
          runs.map((r) => shardMatcher(matchCorpusOf(viewOf(pieces.slice(r.first, r.first + r.pieces))), { windowBeats: 16, mode, candidates: 'every', firstPiece: r.first })),
          { counting: true },
        );
        for (const startGrains of [0, toGrains(8), toGrains(16)]) {
          const window = { points: query.filter((p) => p.at >= startGrains && p.at < startGrains + toGrains(16)), startGrains, exclude };
          expect(merged.best(window)).toEqual(one.best(window));
        }
      }),
      { numRuns: 150 },
    );
  });

  it('a piece repeated in two shards: the earlier piece wins, as in one corpus, and both count', () => {
    const tune = [{ at: 0, pitch: 60 }, { at: 960, pitch: 62 }, { at: 1920, pitch: 64 }, { at: 2880, pitch: 65 }, { at: 3840, pitch: 67 }];
    const other = [{ at: 0, pitch: 50 }, { at: 3840, pitch: 40 }, { at: 7680, pitch: 45 }];
    const pieces = [other, tune, other, tune];
    const mode = MODES[0];
    const merged = mergedMatcher(
      [0, 2].map((first) => shardMatcher(matchCorpusOf(viewOf(pieces.slice(first, first + 2))), { windowBeats: 16, mode, candidates: 'every', firstPiece: first })),
      { counting: true },
    );
    const m = merged.best({ points: tune, startGrains: 0 });
    expect(m).toMatchObject({ piece: 1, score: 1, distinctiveness: 0.5 });
    expect(merged.best({ points: tune, startGrains: 0, exclude: 1 })).toMatchObject({ piece: 3, score: 1, distinctiveness: 1 });
  });
});

describe('dealRuns', () => {
  it('cuts pieces into runs of consecutive pieces with similar note counts', () => {
    expect(dealRuns([10, 30, 20, 20, 20], 2)).toEqual([{ first: 0, pieces: 3 }, { first: 3, pieces: 2 }]);
    expect(dealRuns([5, 5, 5], 3)).toEqual([{ first: 0, pieces: 1 }, { first: 1, pieces: 1 }, { first: 2, pieces: 1 }]);
    // A huge first piece still leaves a piece for every other run.
    expect(dealRuns([100, 1, 1], 3)).toEqual([{ first: 0, pieces: 1 }, { first: 1, pieces: 1 }, { first: 2, pieces: 1 }]);
  });

  it('holds every piece once, in order, each run within a piece of its share', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 1, max: 50 }), { minLength: 1, maxLength: 60 }), fc.integer({ min: 1, max: 8 }), (notes, k) => {
        const shards = Math.min(k, notes.length);
        const runs = dealRuns(notes, shards);
        expect(runs.length).toBe(shards);
        expect(runs.map((r) => r.first)).toEqual(runs.map((_, i) => runs.slice(0, i).reduce((n, r) => n + r.pieces, 0)));
        expect(runs.reduce((n, r) => n + r.pieces, 0)).toBe(notes.length);
        expect(runs.every((r) => r.pieces >= 1)).toBe(true);
      }),
    );
  });

  it('refuses more shards than pieces', () => {
    expect(() => dealRuns([1, 2], 3)).toThrow(/from 1 to the 2 pieces/);
  });
});
