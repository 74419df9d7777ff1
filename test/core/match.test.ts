/**
 * Matching query windows against a corpus (core/match.ts exactMatcher): a
 * window's score is its best over every piece and translation of
 * |(C + t) ∩ window| / max(|window|, |excerpt|), the excerpt being the corpus
 * notes in the W-beat span t aligns with the window (issue 2; the count is
 * problem P2 of Ukkonen, Lemström & Mäkinen 2003, check-values.md).
 *
 * @example
 *   npx vitest run test/core/match.test.ts
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { type Point, toGrains } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import { type WindowMatch, betterMatch } from '../../core/match.js';
import { exactMatcher } from '../helpers/matchers.js';
import { windows } from '../../core/windows.js';
import { corpusOf, pieceOf } from '../helpers/corpus.js';
import { notesOf, pointSet, pts, shift } from '../helpers/points.js';

/**
 * A line that repeats no three-note stretch of itself nor of another such
 * line: a note every half beat, pitch 25 + (a·i² + b·i) mod 97. Two stretches
 * alike would need the difference of two quadratics in the note index, which
 * has a nonzero i² term mod 97 (or a nonzero i term for equal a), to be
 * constant over three or more notes; for fewer than 97 notes it never is.
 */
const aperiodic = (count: number, a = 1, b = 0): [number, number][] =>
  Array.from({ length: count }, (_, i) => [i / 2, 25 + ((a * i * i + b * i) % 97)]);

const inSpan = (points: readonly Point[], from: number, beats: number): Point[] => points.filter((p) => p.at >= from && p.at < from + toGrains(beats));

/** The definition read literally, for every piece and every translation that maps a point onto a point. */
function bruteForce(pieces: readonly Point[][], window: readonly Point[], start: number, beats: number, exclude?: number): { score: number; matched: number } {
  const inWindow = new Set(window.map((p) => `${p.at}:${p.pitch}`));
  let best = { score: 0, matched: 0 };
  pieces.forEach((points, piece) => {
    if (piece === exclude) return;
    for (const c of points) {
      for (const q of window) {
        const [dt, dp] = [q.at - c.at, q.pitch - c.pitch];
        const matched = points.filter((r) => inWindow.has(`${r.at + dt}:${r.pitch + dp}`)).length;
        const excerpt = inSpan(points, start - dt, beats).length;
        const score = matched / Math.max(window.length, excerpt);
        if (score > best.score || (score === best.score && matched > best.matched)) best = { score, matched };
      }
    }
  });
  return best;
}

/** The match must be what it claims: its excerpt, moved by its translation, meets the window in `matched` points. */
function realises(m: WindowMatch, pieces: readonly Point[][], window: readonly Point[], start: number, beats: number): void {
  const excerpt = inSpan(pieces[m.piece], toGrains(m.pieceStart), beats);
  expect(excerpt).toHaveLength(m.excerptNotes);
  const moved = new Set(shift(excerpt, (start - toGrains(m.pieceStart)) / toGrains(1), m.transposition).map((p) => `${p.at}:${p.pitch}`));
  expect(window.filter((p) => moved.has(`${p.at}:${p.pitch}`))).toHaveLength(m.matched);
  expect(m.score).toBe(m.matched / Math.max(window.length, m.excerptNotes));
}

describe('exactMatcher: worked examples', () => {
  const tune = pieceOf('tune.mid', notesOf(aperiodic(64)));
  const other = pieceOf('other.mid', notesOf(aperiodic(64, 3, 1)));
  const view = corpusPoints(corpusOf([other, tune]), 'chromatic');

  it('a copy of beats 8–24 of a piece, 5 semitones higher and 8 beats later, scores 1 with transposition +5 at piece start 8', () => {
    // Query: the tune's notes in [8, 24) moved to [16, 32) and up a fourth; the window [16, 32) holds all 32 of them.
    const query = shift(inSpan(view.points[1], toGrains(8), 16), 8, 5);
    expect(query).toHaveLength(32);
    const m = exactMatcher(view, 16).best({ points: query, startGrains: toGrains(16) });
    expect(m).toEqual({ piece: 1, pieceStart: 8, transposition: 5, matched: 32, excerptNotes: 32, score: 1 });
  });

  it('transposition is measured from the corpus to the query: 3 semitones lower is −3', () => {
    const query = shift(inSpan(view.points[1], toGrains(4), 8), -4, -3);
    expect(exactMatcher(view, 8).best({ points: query, startGrains: 0 })).toMatchObject({ piece: 1, pieceStart: 4, transposition: -3, score: 1 });
  });

  it('the denominator is the larger of the window and the excerpt', () => {
    // Corpus: 8 notes in beats 0–4: C D E F a beat apart and four high notes between them.
    // Window: C D E F a fifth up, beats 0–4 → 4 of the excerpt's 8 notes coincide: 4 / 8.
    const four: [number, number][] = [[0, 60], [1, 62], [2, 64], [3, 65]];
    const dense = corpusPoints(corpusOf([pieceOf('dense.mid', notesOf([...four, [0.5, 90], [1.5, 91], [2.5, 92], [3.5, 93]]))]), 'chromatic');
    const window = pts(...four.map(([b, p]): [number, number] => [b, p + 7]));
    expect(exactMatcher(dense, 4).best({ points: window, startGrains: 0 })).toEqual({ piece: 0, pieceStart: 0, transposition: 7, matched: 4, excerptNotes: 8, score: 0.5 });
    // And the other way: a window of those 8 notes against a corpus holding only the 4 → 4 / 8 again.
    const sparse = corpusPoints(corpusOf([pieceOf('sparse.mid', notesOf(four))]), 'chromatic');
    expect(exactMatcher(sparse, 4).best({ points: dense.points[0], startGrains: 0 })).toMatchObject({ matched: 4, excerptNotes: 4, score: 0.5, transposition: 0 });
  });

  it('leaves out the excluded piece (the human baseline scores a piece against the rest)', () => {
    const window = inSpan(view.points[1], 0, 16);
    expect(exactMatcher(view, 16).best({ points: window, startGrains: 0 })).toMatchObject({ piece: 1, score: 1 });
    const without = exactMatcher(view, 16).best({ points: window, startGrains: 0, exclude: 1 })!;
    expect(without.piece).toBe(0);
    expect(without.score).toBeLessThan(1);
  });

  it('an empty window has no match', () => {
    expect(exactMatcher(view, 16).best({ points: [], startGrains: 0 })).toBeNull();
  });

  it('betterMatch orders by score, then matched notes, then earlier piece and excerpt, then smaller transposition', () => {
    const m: WindowMatch = { piece: 1, pieceStart: 4, transposition: 2, matched: 5, excerptNotes: 5, score: 0.5 };
    expect(betterMatch(m, null)).toBe(true);
    expect(betterMatch({ ...m, score: 0.6 }, m)).toBe(true);
    expect(betterMatch({ ...m, matched: 6 }, m)).toBe(true);
    expect(betterMatch({ ...m, piece: 0 }, m)).toBe(true);
    expect(betterMatch({ ...m, pieceStart: 2 }, m)).toBe(true);
    expect(betterMatch({ ...m, transposition: -1 }, m)).toBe(true);
    expect(betterMatch({ ...m, transposition: -2 }, m)).toBe(true);
    expect(betterMatch(m, { ...m, transposition: -2 })).toBe(false);
    expect(betterMatch(m, m)).toBe(false);
  });
});

describe('exactMatcher: properties (fast-check)', () => {
  const corpusArb = fc.array(pointSet({ min: 1, max: 30, beats: 24 }), { minLength: 1, maxLength: 3 });

  it('equals the definition read literally, and every match it reports is what it claims', () => {
    fc.assert(
      fc.property(corpusArb, pointSet({ beats: 24 }), fc.constantFrom(4, 8), fc.option(fc.nat(2), { nil: undefined }), (pieces, query, beats, exclude) => {
        const view = corpusPoints(corpusOf(pieces.map((p, i) => pieceOf(`p${i}.mid`, notesOf(p.map((q): [number, number] => [q.at / toGrains(1), q.pitch]))))), 'chromatic');
        const matcher = exactMatcher(view, beats);
        for (const w of windows(query, { window: beats, hop: beats / 2 })) {
          const start = toGrains(w.start);
          const m = matcher.best({ points: w.points, startGrains: start, exclude });
          const ref = bruteForce(view.points, w.points, start, beats, exclude);
          if (!m) {
            expect(pieces.filter((_, i) => i !== exclude)).toHaveLength(0);
            continue;
          }
          expect({ score: m.score, matched: m.matched }).toEqual(ref);
          expect(m.piece).not.toBe(exclude);
          realises(m, view.points, w.points, start, beats);
        }
      }),
      { numRuns: 60 },
    );
  });

  it('a translated copy of a corpus excerpt scores 1 with the right piece, piece start and transposition', () => {
    const view = corpusPoints(corpusOf([pieceOf('a.mid', notesOf(aperiodic(96, 3, 1))), pieceOf('b.mid', notesOf(aperiodic(96)))]), 'chromatic');
    const matcher = exactMatcher(view, 8);
    fc.assert(
      fc.property(fc.nat(1), fc.integer({ min: 0, max: 40 }), fc.integer({ min: -16, max: 16 }), fc.integer({ min: -12, max: 12 }), (piece, from, hops, transposition) => {
        // The query window starts a whole number of hops (4 beats) from the excerpt, anywhere the window fits.
        const start = Math.max(0, from + 4 * hops);
        const window = shift(inSpan(view.points[piece], toGrains(from), 8), start - from, transposition);
        expect(matcher.best({ points: window, startGrains: toGrains(start) })).toEqual({ piece, pieceStart: from, transposition, matched: 16, excerptNotes: 16, score: 1 });
      }),
    );
  });
});
