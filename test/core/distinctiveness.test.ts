/**
 * Distinctiveness: stock figures that many corpus pieces share score low; a
 * copied chorale phrase scores high; a piece's own repeats are one source,
 * versions of a tune in other pieces are more. Each is counted both ways — by
 * brute force over the corpus, and through the corpus index — and the two
 * must agree here; on held-out chorale windows the index may only find fewer
 * pieces, never more. Stock figures are our own invented data
 * (a scale run and a cadence formula planted in seeded random walks); the
 * phrases are JSB chorales (source: test/fixtures/jsb/README.md; train 0–39 as the corpus).
 */
import { describe, expect, test } from 'vitest';
import type { Note, PitchMode } from '../../core/note.js';
import { toPoints } from '../../core/note.js';
import { type Corpus, corpusPoints } from '../../core/corpus.js';
import { type PieceCount, MIN_FIGURE_NOTES, holdsAt, indexedPiecesHolding, matchedMaterial, piecesHolding, withDistinctiveness } from '../../core/distinctiveness.js';
import { verifyShift } from '../../core/verify.js';
import type { CorpusPoints } from '../../core/corpus.js';
import { exactMatcher, matchCorpusOf } from '../helpers/matchers.js';
import { windows } from '../../core/windows.js';
import { toGrains } from '../../core/note.js';
import { chorales, passage, randomWalk } from '../helpers/material.js';
import { pieceOf } from '../helpers/corpus.js';

const note = (onset: number, duration: number, pitch: number): Note => ({ onset, duration, pitch, morph: pitch, velocity: 80, channel: 1 });
/** An ascending major scale in eighth notes, from `from`. */
const scaleRun = (at: number, from: number): Note[] => [0, 2, 4, 5, 7, 9, 11, 12].map((step, i) => note(at + i * 0.5, 0.5, from + step));
/** An invented four-voice closing formula: three chords, the last held. */
const cadence = (at: number, t: number): Note[] =>
  [
    [53, 60, 65, 69],
    [55, 59, 62, 67],
    [48, 55, 64, 72],
  ].flatMap((chord, i) => chord.map((p) => note(at + i, i === 2 ? 2 : 1, p + t)));

/** Sixteen pieces of unrelated random-walk material, each with the run and the cadence planted at its own place and key. */
const stockCorpus = (): Corpus => ({
  pieces: Array.from({ length: 16 }, (_, i) => {
    const walk = randomWalk(32, 1000 + i).filter((n) => n.onset < 4 || n.onset >= 10);
    return pieceOf(`stock${i}.mid`, [...walk, ...scaleRun(5 + (i % 3) * 0.5, 55 + (i % 7)), ...cadence(28, (i % 5) - 2)].sort((a, b) => a.onset - b.onset || a.pitch - b.pitch));
  }),
});

/** The best match with its distinctiveness, counted by brute force and through the index, which must agree. */
const distinctivenessOf = (c: Corpus, query: Note[], window: number, mode: PitchMode = 'chromatic') => {
  const view = corpusPoints(c, mode);
  const [brute, indexed] = bothWays(view).map((count) => withDistinctiveness(exactMatcher(view, window), count).best({ points: toPoints(query, mode), startGrains: 0 })!);
  expect(indexed).toEqual(brute);
  return brute;
};

/** Counting pieces by brute force, and through the index. */
function bothWays(view: CorpusPoints): PieceCount[] {
  const { flat, index } = matchCorpusOf(view);
  return [{ flat, tolerance: 0 }, { flat, index, tolerance: 0 }];
}

describe('stock figures', () => {
  const corpus = stockCorpus();

  test('a scale run that sixteen pieces share gets distinctiveness ≤ 1/16', () => {
    const m = distinctivenessOf(corpus, scaleRun(0, 62), 4);
    expect(m.matched).toBe(8);
    expect(m.distinctiveness).toBeLessThanOrEqual(1 / 16);
  });

  test('the run with fresh notes around it is still common', () => {
    const query = [...scaleRun(0, 62), note(0, 1, 50), note(2, 1, 47), note(4.5, 1, 80)].sort((a, b) => a.onset - b.onset);
    expect(distinctivenessOf(corpus, query, 8).distinctiveness).toBeLessThanOrEqual(1 / 8);
  });

  test('a cadence formula that sixteen pieces share gets distinctiveness ≤ 1/16', () => {
    const m = distinctivenessOf(corpus, cadence(0, 4), 4);
    expect(m.matched).toBe(12);
    expect(m.distinctiveness).toBeLessThanOrEqual(1 / 16);
  });

  test('a run overlapping itself a step later is one source, not two (morphetic pitch)', () => {
    // In diatonic steps the run shifted by one note and one step keeps 7 of its 8 notes.
    const one: Corpus = { pieces: [pieceOf('run.mid', scaleRun(0, 60))] };
    expect(distinctivenessOf(one, pieceOf('q.mid', scaleRun(0, 60)).notes, 4, 'morphetic').distinctiveness).toBe(1);
  });
});

describe('copied chorale phrases', () => {
  const { corpus } = chorales();

  test('a copied phrase is found in its own piece only: distinctiveness 1 for 9 of 10 chorales, never below 0.5', () => {
    const view = corpusPoints(corpus, 'chromatic');
    const matcher = withDistinctiveness(exactMatcher(view, 16), bothWays(view)[0]);
    const found = [2, 6, 10, 14, 18, 22, 26, 30, 34, 38].map((piece) => {
      const m = matcher.best({ points: toPoints(passage(corpus.pieces[piece].notes, 16, 32)), startGrains: 0 })!;
      expect(m).toMatchObject({ piece, score: 1 });
      return m.distinctiveness!;
    });
    expect(Math.min(...found)).toBeGreaterThanOrEqual(0.5);
    expect(found.filter((d) => d === 1).length).toBeGreaterThanOrEqual(9);
  });

  // Chorale 6's beats 16–32 occur once in it (some chorales repeat their opening phrases, and then count twice).
  const twice: Corpus = { pieces: [...corpus.pieces.slice(0, 10), { ...corpus.pieces[6], path: 'again.mid' }] };
  const phrase = passage(corpus.pieces[6].notes, 16, 32);

  test('the same phrase in two pieces halves it', () => {
    expect(distinctivenessOf(twice, phrase, 16).distinctiveness).toBe(0.5);
  });

  test("a piece's own repeats are one source; three versions of a tune are three", () => {
    // Each version plays the phrase twice, 16 beats apart, as a tune plays its first strain twice.
    const repeated = (n: Note[]): Note[] => [...n, ...n.map((x) => ({ ...x, onset: x.onset + 16 }))];
    const version = (path: string): ReturnType<typeof pieceOf> => pieceOf(path, repeated(phrase.map((x) => ({ ...x }))));
    const one: Corpus = { pieces: [...corpus.pieces.slice(0, 7), version('tune.mid')] };
    expect(distinctivenessOf(one, phrase, 16).distinctiveness).toBe(1 / 2); // the tune and chorale 6 it came from
    const three: Corpus = { pieces: [...corpus.pieces.slice(0, 7), version('tune.mid'), version('tune-b.mid'), version('tune-c.mid')] };
    expect(distinctivenessOf(three, phrase, 16).distinctiveness).toBe(1 / 4);
  });

  test('the piece left out of the search is left out of the count', () => {
    const view = corpusPoints(twice, 'chromatic');
    for (const m of bothWays(view).map((count) => withDistinctiveness(exactMatcher(view, 16), count))) {
      expect(m.best({ points: toPoints(phrase), startGrains: 0, exclude: 10 })).toMatchObject({ piece: 6, distinctiveness: 1 });
    }
  });
});

describe('counting through the index', () => {
  const { corpus, heldOut } = chorales();
  const view = corpusPoints(corpus, 'chromatic');
  const { flat, index } = matchCorpusOf(view);
  const exact = exactMatcher(view, 16);

  test('on every window of 20 held-out chorales: never more pieces than the brute force, the same in at least 90%', () => {
    let same = 0;
    let counted = 0;
    for (const piece of heldOut) {
      for (const w of windows(toPoints(piece.notes), { window: 16, hop: 8 })) {
        const start = toGrains(w.start);
        const m = exact.best({ points: w.points, startGrains: start });
        if (!m) continue;
        const material = matchedMaterial(flat, { points: w.points, startGrains: start }, toGrains(16), m, 0);
        if (material.length < MIN_FIGURE_NOTES) continue;
        const indexed = indexedPiecesHolding(index, m.piece, material);
        const brute = piecesHolding(material, flat);
        expect(indexed).toBeGreaterThanOrEqual(1);
        expect(indexed).toBeLessThanOrEqual(brute);
        counted++;
        if (indexed === brute) same++;
      }
    }
    expect(counted).toBeGreaterThan(100);
    expect(same / counted).toBeGreaterThanOrEqual(0.9);
  });

  test('a place holds the material exactly when the full score of that translation matches the share asked, whatever the share', () => {
    const material = view.points[3].slice(10, 30);
    const span = { points: material, startGrains: material[0].at, spanGrains: material[material.length - 1].at - material[0].at + 1 };
    let held = 0;
    for (let piece = 0; piece < 12; piece++) {
      for (const [shift, dp] of [[0, 0], [material[0].at - flat.at[flat.offsets[piece] + 5], material[0].pitch - flat.pitch[flat.offsets[piece] + 5]], [toGrains(1), 2]]) {
        const matched = verifyShift(flat, span, piece, shift, dp).matched;
        for (const need of [1, 5, 16, 20]) {
          expect(holdsAt(flat, material, { piece, shift, dp }, need)).toBe(matched >= need);
          if (matched >= need) held++;
        }
      }
    }
    // The source place itself holds all 20 notes: the comparison above is not all "no".
    expect(holdsAt(flat, material, { piece: 3, shift: 0, dp: 0 }, 20)).toBe(true);
    expect(held).toBeGreaterThan(4);
  });

  test('material of fewer than three notes is no figure: distinctiveness 0 both ways', () => {
    const view2 = corpusPoints({ pieces: corpus.pieces.slice(0, 4) }, 'chromatic');
    const pair = view2.points[1].slice(0, 2);
    for (const m of bothWays(view2).map((count) => withDistinctiveness(exactMatcher(view2, 4), count))) {
      expect(m.best({ points: pair, startGrains: pair[0].at })).toMatchObject({ matched: 2, distinctiveness: 0 });
    }
  });
});
