/**
 * Played timing: one-to-one matching within ± tolerance, and the tolerance
 * matcher on JSB chorale copies played with human timing (source:
 * test/fixtures/jsb/README.md — Bach chorales from the open JSB data set; train 0–39 as the corpus).
 */
import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { type Point, GRAINS_PER_BEAT, comparePoints, toGrains, toPoints } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import { pitchLines, toleranceMatching } from '../../core/tolerance.js';
import { ExcerptLineScratch, excerptLines, verifier } from '../../core/verify.js';
import { flattenPoints } from '../../core/triple-index.js';
import { originalityReport } from '../../core/report.js';
import { exactMatcher, indexedMatcher } from '../helpers/matchers.js';

/** The reference within a tolerance: every translation verified. */
const toleranceMatcher = (view: Parameters<typeof exactMatcher>[0], windowBeats: number, tolerance: number) => exactMatcher(view, windowBeats, { mode: { tolerance, tempoFree: false } });
import { chorales, passage, played } from '../helpers/material.js';
import { pieceOf } from '../helpers/corpus.js';

/** Maximum bipartite matching by augmenting paths (Kuhn's algorithm): the textbook reference for the greedy line matching. */
function kuhn(corpus: readonly Point[], window: readonly Point[], shift: number, pitch: number, tol: number): number {
  const owner = new Array<number>(window.length).fill(-1);
  const fits = (c: Point, q: Point) => q.pitch === c.pitch + pitch && Math.abs(q.at - (c.at + shift)) <= tol;
  const tryAssign = (ci: number, seen: boolean[]): boolean => {
    for (let qi = 0; qi < window.length; qi++) {
      if (seen[qi] || !fits(corpus[ci], window[qi])) continue;
      seen[qi] = true;
      if (owner[qi] < 0 || tryAssign(owner[qi], seen)) {
        owner[qi] = ci;
        return true;
      }
    }
    return false;
  };
  let n = 0;
  for (let ci = 0; ci < corpus.length; ci++) if (tryAssign(ci, new Array(window.length).fill(false))) n++;
  return n;
}

const pointSet = (maxAt: number) =>
  fc.uniqueArray(fc.record({ at: fc.integer({ min: 0, max: maxAt }), pitch: fc.integer({ min: 60, max: 63 }) }), { selector: (p) => `${p.at}:${p.pitch}`, maxLength: 14 }).map((ps) => ps.sort(comparePoints));

describe('one-to-one matching within ± tolerance', () => {
  test('the greedy line matching is as large as a maximum bipartite matching (Kuhn)', () => {
    fc.assert(
      fc.property(pointSet(40), pointSet(40), fc.integer({ min: -5, max: 5 }), fc.integer({ min: -1, max: 1 }), fc.integer({ min: 0, max: 6 }), (c, w, shift, pitch, tol) => {
        const pairs = toleranceMatching(pitchLines(c), w, { at: shift, pitch }, tol);
        expect(pairs.length).toBe(kuhn(c, w, shift, pitch, tol));
        // One-to-one: no corpus point and no played point is used twice.
        expect(new Set(pairs.map((p) => `${p.corpus.at}:${p.corpus.pitch}`)).size).toBe(pairs.length);
        expect(new Set(pairs.map((p) => `${p.query.at}:${p.query.pitch}`)).size).toBe(pairs.length);
        for (const p of pairs) expect(Math.abs(p.query.at - (p.corpus.at + shift))).toBeLessThanOrEqual(tol);
      }),
      { numRuns: 300 },
    );
  });

  test('one played note never stands for two corpus notes', () => {
    // Two corpus notes of the same pitch 0.05 beat apart, one played note between them.
    const corpus = [{ at: 0, pitch: 60 }, { at: toGrains(0.05), pitch: 60 }];
    const window = [{ at: toGrains(0.025), pitch: 60 }];
    expect(toleranceMatching(pitchLines(corpus), window, { at: 0, pitch: 0 }, toGrains(0.1))).toHaveLength(1);
  });
});

describe('pitch lines of corpus excerpts', () => {
  test('lines refilled in place read as the excerpt\'s own lines, one excerpt after another', () => {
    fc.assert(
      fc.property(fc.array(pointSet(40), { minLength: 1, maxLength: 3 }), fc.array(fc.record({ piece: fc.nat(), from: fc.integer({ min: -5, max: 45 }), length: fc.integer({ min: 0, max: 30 }) }), { minLength: 1, maxLength: 8 }), (pieces, excerpts) => {
        const flat = flattenPoints({ mode: 'chromatic', points: pieces, pieces: [] });
        const scratch = new ExcerptLineScratch();
        for (const e of excerpts) {
          const piece = e.piece % pieces.length;
          const own = excerptLines(flat, piece, e.from, e.from + e.length);
          const refilled = scratch.refill(flat, piece, e.from, e.from + e.length);
          // Every pitch the corpus can hold, and one it never does: absent from the excerpt reads as no line at all.
          for (let pitch = 59; pitch <= 64; pitch++) expect(refilled.get(pitch)).toEqual(own.get(pitch));
        }
      }),
      { numRuns: 300 },
    );
  });
});

describe('the tolerance matcher', () => {
  test('with a tolerance of one grain it scores on-grid material exactly as the exact path does', () => {
    const notes = fc.array(fc.record({ step: fc.integer({ min: 0, max: 63 }), pitch: fc.integer({ min: 55, max: 70 }) }), { minLength: 1, maxLength: 30 });
    fc.assert(
      fc.property(fc.array(notes, { minLength: 1, maxLength: 3 }), notes, (pieces, query) => {
        const asNotes = (ns: { step: number; pitch: number }[]) => ns.map((n) => ({ onset: n.step * 0.25, duration: 0.25, pitch: n.pitch, morph: n.pitch, velocity: 80, channel: 1 }));
        const view = corpusPoints({ pieces: pieces.map((p, i) => pieceOf(`p${i}.mid`, asNotes(p))) }, 'chromatic');
        const window = toPoints(asNotes(query));
        const exact = exactMatcher(view, 16).best({ points: window, startGrains: 0 });
        const tolerant = toleranceMatcher(view, 16, 1 / GRAINS_PER_BEAT).best({ points: window, startGrains: 0 });
        expect(tolerant?.score).toBe(exact?.score);
        expect(tolerant?.matched).toBe(exact?.matched);
      }),
      { numRuns: 150 },
    );
  });

  test('refuses a tolerance outside [0, 1) beat, naming it', () => {
    const flat = flattenPoints(corpusPoints({ pieces: [] }, 'chromatic'));
    for (const bad of [-0.1, 1, Number.NaN]) expect(() => verifier(flat, bad)).toThrow(/tolerance must be at least 0 and under 1 beat/);
  });
});

describe('JSB chorale copies played with human timing', () => {
  const { corpus } = chorales();
  const view = corpusPoints(corpus, 'chromatic');
  const exact = exactMatcher(view, 16);
  const tolerant = toleranceMatcher(view, 16, 0.1);
  // Twelve copies of beats 8–24 of different chorales, every ontime moved by up to ±0.06 beat and 10% of notes dropped (seeded).
  const copies = [0, 3, 6, 9, 12, 15, 18, 21, 24, 27, 30, 33].map((piece, i) => ({
    piece,
    window: toPoints(played(passage(corpus.pieces[piece].notes, 8, 24, 1), { jitter: 0.06, drop: 0.1, seed: 100 + i })).filter((p) => p.at < toGrains(16)),
  }));

  test('score ≥ 0.7 with a tolerance of 0.1 beat, and lower on the exact path', () => {
    const figures = copies.map(({ piece, window }) => {
      const t = tolerant.best({ points: window, startGrains: 0 })!;
      const e = exact.best({ points: window, startGrains: 0 })!;
      expect(t.piece).toBe(piece);
      expect(Math.abs(t.pieceStart - 7)).toBeLessThan(0.1);
      expect(t.score).toBeGreaterThanOrEqual(0.7);
      expect(e.score).toBeLessThan(t.score);
      return { tolerant: t.score, exact: e.score };
    });
    const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
    // Measured (test/bench/RESULTS.md): tolerance 0.1 mean ≈ 0.84 (min ≈ 0.78); exact mean ≈ 0.04.
    expect(mean(figures.map((f) => f.tolerant))).toBeGreaterThan(0.75);
    expect(mean(figures.map((f) => f.exact))).toBeLessThan(0.2);
  });

  test('a report in tolerance mode carries each window’s distinctiveness', () => {
    const take = played(passage(corpus.pieces[5].notes, 0, 32), { jitter: 0.06, drop: 0.1, seed: 9 });
    const r = originalityReport([{ file: 'take.mid', notes: take }], view, indexedMatcher(view, 16, { mode: { tolerance: 0.1, tempoFree: false }, distinctiveness: true }), { window: 16, hop: 8 });
    const matched = r.queries[0].windows.filter((w) => w.match);
    expect(matched.length).toBeGreaterThan(0);
    for (const w of matched) {
      expect(w.match!.distinctiveness).toBeGreaterThan(0);
      expect(w.match!.distinctiveness).toBeLessThanOrEqual(1);
      expect(w.match!.timeScale).toBeUndefined();
    }
    expect(r.queries[0].windows[0].match!.piece).toBe(corpus.pieces[5].path);
  });
});
