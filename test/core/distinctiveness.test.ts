/**
 * Distinctiveness: stock figures that many corpus pieces share score low; a
 * copied chorale phrase scores high. Each is counted both ways — by brute
 * force over the corpus, and through the corpus index — and the two must
 * agree here; on held-out chorale windows the index may only find fewer
 * places, never more. Stock figures are our own invented data
 * (a scale run and a cadence formula planted in seeded random walks); the
 * phrases are JSB chorales (source: test/fixtures/jsb/README.md; train 0–39 as the corpus).
 */
import { describe, expect, test } from 'vitest';
import type { Note, PitchMode } from '../../core/note.js';
import { toPoints } from '../../core/note.js';
import { type Corpus, corpusPoints } from '../../core/corpus.js';
import { exactMatcher } from '../../core/match.js';
import { MIN_FIGURE_NOTES, indexedPlacesHolding, lazyPitchLines, matchedMaterial, placesHolding, withDistinctiveness } from '../../core/distinctiveness.js';
import { buildTriples, corpusIndex, flattenPoints } from '../../core/triple-index.js';
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
  const brute = withDistinctiveness(exactMatcher(view, window), view, 0).best(toPoints(query, mode), 0)!;
  const indexed = withDistinctiveness(exactMatcher(view, window), view, 0, corpusIndex(buildTriples(flattenPoints(view)))).best(toPoints(query, mode), 0)!;
  expect(indexed).toEqual(brute);
  return brute;
};

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

  test('a run overlapping itself a step later is one place, not two (morphetic pitch)', () => {
    // In diatonic steps the run shifted by one note and one step keeps 7 of its 8 notes.
    const one: Corpus = { pieces: [pieceOf('run.mid', scaleRun(0, 60))] };
    expect(distinctivenessOf(one, pieceOf('q.mid', scaleRun(0, 60)).notes, 4, 'morphetic').distinctiveness).toBe(1);
  });
});

describe('copied chorale phrases', () => {
  const { corpus } = chorales();

  test('a copied phrase is found in its own place only: distinctiveness 1 for 9 of 10 chorales, never below 0.5', () => {
    const view = corpusPoints(corpus, 'chromatic');
    const matcher = withDistinctiveness(exactMatcher(view, 16), view, 0);
    const found = [2, 6, 10, 14, 18, 22, 26, 30, 34, 38].map((piece) => {
      const m = matcher.best(toPoints(passage(corpus.pieces[piece].notes, 16, 32)), 0)!;
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

  test('the piece left out of the search is left out of the count', () => {
    const view = corpusPoints(twice, 'chromatic');
    const index = corpusIndex(buildTriples(flattenPoints(view)));
    for (const m of [withDistinctiveness(exactMatcher(view, 16), view, 0), withDistinctiveness(exactMatcher(view, 16), view, 0, index)]) {
      expect(m.best(toPoints(phrase), 0, { exclude: 10 })).toMatchObject({ piece: 6, distinctiveness: 1 });
    }
  });
});

describe('counting through the index', () => {
  const { corpus, heldOut } = chorales();
  const view = corpusPoints(corpus, 'chromatic');
  const index = corpusIndex(buildTriples(flattenPoints(view)));
  const exact = exactMatcher(view, 16);
  const lines = lazyPitchLines((piece) => view.points[piece]);

  test('on every window of 20 held-out chorales: never more places than the brute force, the same in at least 90%', () => {
    let same = 0;
    let counted = 0;
    for (const piece of heldOut) {
      for (const w of windows(toPoints(piece.notes), { window: 16, hop: 8 })) {
        const start = toGrains(w.start);
        const m = exact.best(w.points, start);
        if (!m) continue;
        const material = matchedMaterial(lines(m.piece), w.points, start, m, 0);
        if (material.length < MIN_FIGURE_NOTES) continue;
        const indexed = indexedPlacesHolding(index, m.piece, material);
        const brute = placesHolding(material, view);
        expect(indexed).toBeGreaterThanOrEqual(1);
        expect(indexed).toBeLessThanOrEqual(brute);
        counted++;
        if (indexed === brute) same++;
      }
    }
    expect(counted).toBeGreaterThan(100);
    expect(same / counted).toBeGreaterThanOrEqual(0.9);
  });

  test('material of fewer than three notes is no figure: distinctiveness 0 both ways', () => {
    const view2 = corpusPoints({ pieces: corpus.pieces.slice(0, 4) }, 'chromatic');
    const pair = view2.points[1].slice(0, 2);
    for (const m of [withDistinctiveness(exactMatcher(view2, 4), view2, 0), withDistinctiveness(exactMatcher(view2, 4), view2, 0, corpusIndex(buildTriples(flattenPoints(view2))))]) {
      expect(m.best(pair, pair[0].at)).toMatchObject({ matched: 2, distinctiveness: 0 });
    }
  });
});
