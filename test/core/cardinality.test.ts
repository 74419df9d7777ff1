/**
 * The cardinality score (core/cardinality.ts): hand-worked examples, the
 * published method's own figure, and properties checked with fast-check.
 * Definition: Ukkonen, Lemström & Mäkinen (2003), ISMIR, problem P2 — the
 * translation that makes the most points of one set coincide with points of
 * the other; the score divides that count by the size of the larger set
 * (check-values.md, "Point-set matching").
 *
 * @example
 *   npx vitest run test/core/cardinality.test.ts
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { type Point, GRAINS_PER_BEAT, toPoints } from '../../core/note.js';
import { cardinalityScore, keyTranslation, translationKey } from '../../core/cardinality.js';
import { notesOf, pointSet, pts, shift, translation } from '../helpers/points.js';

/** The definition, read literally: try every translation that maps some point onto some point, count with a set. */
function bruteForce(a: readonly Point[], b: readonly Point[]): number {
  const inB = new Set(b.map((p) => `${p.at}:${p.pitch}`));
  let best = 0;
  for (const p of a) {
    for (const q of b) {
      const [dt, dp] = [q.at - p.at, q.pitch - p.pitch];
      best = Math.max(best, a.filter((r) => inB.has(`${r.at + dt}:${r.pitch + dp}`)).length);
    }
  }
  return best;
}

describe('cardinality score: hand-worked examples', () => {
  it('three of four points coincide after 2 beats and 5 semitones up', () => {
    // A: (0,60) (1,62) (2,64) (3,65)     a rising C–D–E–F
    // B: (2,65) (3,67) (4,69) (5,71)     F–G–A–B two beats later
    // A + (2, +5) = (2,65) (3,67) (4,69) (5,70): 65, 67, 69 land on B, 70 misses 71.
    // No other translation lines up more than one pair, so 3 / max(4, 4) = 0.75.
    const a = pts([0, 60], [1, 62], [2, 64], [3, 65]);
    const b = pts([2, 65], [3, 67], [4, 69], [5, 71]);
    expect(cardinalityScore(a, b)).toEqual({ score: 0.75, matched: 3, sizes: [4, 4], translation: { beats: 2, pitch: 5 } });
  });

  it('the larger set is the denominator: a 3-note figure inside 6 notes scores 3 / 6', () => {
    // A: (0,60) (0.5,64) (1,67); B holds A + (4, −2) = (4,58) (4.5,62) (5,65) among three others.
    const a = pts([0, 60], [0.5, 64], [1, 67]);
    const b = pts([0, 50], [1, 51], [4, 58], [4.5, 62], [5, 65], [7, 70]);
    expect(cardinalityScore(a, b)).toEqual({ score: 0.5, matched: 3, sizes: [3, 6], translation: { beats: 4, pitch: -2 } });
    expect(cardinalityScore(b, a)).toMatchObject({ score: 0.5, matched: 3, sizes: [6, 3], translation: { beats: -4, pitch: 2 } });
  });

  it('among equally good translations the smallest time shift, then pitch shift, is reported', () => {
    // A: (0,60). B: (0,60) (1,62). Both translations (0,0) and (1,+2) land 1 point; (0,0) moves least.
    expect(cardinalityScore(pts([0, 60]), pts([0, 60], [1, 62]))).toEqual({ score: 0.5, matched: 1, sizes: [1, 2], translation: { beats: 0, pitch: 0 } });
    // B: (−1,61) (1,59): shifts (−1,+1) and (1,−1) tie on |time| and |pitch|; the earlier is reported.
    expect(cardinalityScore(pts([0, 60]), pts([-1, 61], [1, 59])).translation).toEqual({ beats: -1, pitch: 1 });
  });

  it('two notes with the same ontime and pitch are one point', () => {
    // Notes: C at beat 0 twice (a doubling on two tracks), E at beat 1 → points (0,60) (1,64).
    const doubled = toPoints(notesOf([[0, 60], [0, 60], [1, 64]]));
    expect(doubled).toEqual(pts([0, 60], [1, 64]));
    expect(cardinalityScore(doubled, pts([5, 60], [6, 64]))).toMatchObject({ score: 1, matched: 2, sizes: [2, 2] });
  });

  it('an empty set scores 0 with no translation', () => {
    expect(cardinalityScore([], pts([0, 60]))).toEqual({ score: 0, matched: 0, sizes: [0, 1], translation: null });
    expect(cardinalityScore(pts([0, 60]), [])).toEqual({ score: 0, matched: 0, sizes: [1, 0], translation: null });
  });

  it('translations pack into one number and back, for negative shifts and the pitch extremes', () => {
    for (const [at, pitch] of [[0, 0], [-1, 0], [-GRAINS_PER_BEAT * 1000, -127], [GRAINS_PER_BEAT * 5000, 127], [7, -1023], [-7, 1023]]) {
      expect(keyTranslation(translationKey(at, pitch))).toEqual({ at, pitch });
    }
  });
});

describe("cardinality score: the published method's figure", () => {
  it('18 coinciding points where the larger set has 52 gives 0.346 (Ukkonen, Lemström & Mäkinen 2003; check-values.md)', () => {
    // A: 52 points, one a beat at beats 0…51, pitch 40 + i² mod 53. The pitch steps between points j apart
    // are 2ij + j² mod 53, which change with i unless j ≡ 0 (mod 53): no stretch of A repeats another.
    const a = pts(...Array.from({ length: 52 }, (_, i): [number, number] => [i, 40 + ((i * i) % 53)]));
    // B: A's first 18 points moved 100 beats later and 3 semitones up, plus 22 more at beats 1000, 1010, …
    // Any translation onto B's extra points is ≥ 883 beats, too far for A's 51-beat span to reach the copy as well,
    // and the extras lie 10 beats apart, so at most 6 of them fit A's span: the best count is the copy's 18.
    const copy = shift(a.slice(0, 18), 100, 3);
    const extras = pts(...Array.from({ length: 22 }, (_, k): [number, number] => [1000 + 10 * k, 50 + ((5 * k) % 24)]));
    const b = [...copy, ...extras];
    const r = cardinalityScore(a, b);
    expect(r.sizes).toEqual([52, 40]);
    expect(r.matched).toBe(18);
    expect(r.translation).toEqual({ beats: 100, pitch: 3 });
    expect(r.score).toBeCloseTo(0.346, 3);
    expect(bruteForce(a, b)).toBe(18);
  });
});

describe('cardinality score: properties (fast-check)', () => {
  it('equals the definition read literally (brute force over every pair)', () => {
    fc.assert(fc.property(pointSet(), pointSet(), (a, b) => cardinalityScore(a, b).matched === bruteForce(a, b)));
  });

  it('is unchanged when either set is translated', () => {
    fc.assert(
      fc.property(pointSet(), pointSet(), translation(), translation(), (a, b, [ta, pa], [tb, pb]) => {
        const base = cardinalityScore(a, b);
        const moved = [cardinalityScore(shift(a, ta, pa), b), cardinalityScore(a, shift(b, tb, pb)), cardinalityScore(shift(a, ta, pa), shift(b, tb, pb))];
        return moved.every((m) => m.score === base.score && m.matched === base.matched);
      }),
    );
  });

  it('is symmetric in value: score(a, b) = score(b, a)', () => {
    fc.assert(
      fc.property(pointSet(), pointSet(), (a, b) => {
        const [ab, ba] = [cardinalityScore(a, b), cardinalityScore(b, a)];
        return ab.score === ba.score && ab.matched === ba.matched;
      }),
    );
  });

  it('is exactly 1 for a translated copy, with that translation', () => {
    fc.assert(
      fc.property(pointSet(), translation(), (a, [beats, pitch]) => {
        const r = cardinalityScore(a, shift(a, beats, pitch));
        expect(r.score).toBe(1);
        expect(r.matched).toBe(a.length);
        // A copy of itself elsewhere in the same set could tie; the reported translation must still carry a onto the copy.
        const back = shift(a, r.translation!.beats, r.translation!.pitch);
        expect(back).toEqual(shift(a, beats, pitch));
      }),
    );
  });

  it('is never above 1 nor below 0, and matched never exceeds the smaller set', () => {
    fc.assert(
      fc.property(pointSet({ min: 0 }), pointSet({ min: 0 }), (a, b) => {
        const r = cardinalityScore(a, b);
        return r.score >= 0 && r.score <= 1 && r.matched <= Math.min(a.length, b.length) && r.score === (r.matched === 0 ? 0 : r.matched / Math.max(a.length, b.length));
      }),
    );
  });
});
