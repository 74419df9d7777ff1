/**
 * The cardinality score of two point sets: the largest number of points of
 * one that a single translation in time and pitch lands on points of the
 * other, divided by the size of the larger set.
 *
 * @example
 *   const a = toPoints(notesA), b = toPoints(notesB);
 *   cardinalityScore(a, b)
 *   // → { score: 0.75, matched: 3, sizes: [4, 4], translation: { beats: 2, pitch: 5 } }
 */
import { type Point, GRAINS_PER_BEAT } from './note.js';

/** A translation taking the first set onto the second: time in grains, pitch in steps. */
export interface Translation {
  at: number;
  pitch: number;
}

/**
 * Packs a translation into one number for hashing. Pitch differences lie
 * within ±1024 in either dimension; time differences are whole grains well
 * inside 2^40, so the key stays an exact double.
 */
export const translationKey = (at: number, pitch: number): number => at * 2048 + (pitch + 1024);
export const keyTranslation = (key: number): Translation => {
  const pitch = (((key % 2048) + 2048) % 2048) - 1024;
  return { at: (key - (pitch + 1024)) / 2048, pitch };
};

/** Counts, for every translation t, |(from + t) ∩ to|. */
export function translationCounts(from: readonly Point[], to: readonly Point[]): Map<number, number> {
  const counts = new Map<number, number>();
  for (const q of to) {
    for (const c of from) {
      const k = translationKey(q.at - c.at, q.pitch - c.pitch);
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
  }
  return counts;
}

export interface SetScore {
  score: number;
  matched: number;
  sizes: [number, number];
  /** Translation from the first set to the second, in beats and pitch steps. */
  translation: { beats: number; pitch: number } | null;
}

/**
 * Exact, translation-invariant cardinality score of `a` against `b`. Among
 * translations with equal count the one with the smallest time shift, then
 * smallest |pitch| shift, is reported, so the answer is deterministic.
 */
export function cardinalityScore(a: readonly Point[], b: readonly Point[]): SetScore {
  const sizes: [number, number] = [a.length, b.length];
  if (a.length === 0 || b.length === 0) return { score: 0, matched: 0, sizes, translation: null };
  let best = { count: 0, t: { at: 0, pitch: 0 } };
  for (const [k, count] of translationCounts(a, b)) {
    const t = keyTranslation(k);
    if (count > best.count || (count === best.count && closerShift(t, best.t))) best = { count, t };
  }
  return {
    score: best.count / Math.max(a.length, b.length),
    matched: best.count,
    sizes,
    translation: { beats: best.t.at / GRAINS_PER_BEAT, pitch: best.t.pitch },
  };
}

/** Orders translations: smaller time shift first, then smaller pitch shift, then the earlier and lower. */
export const compareShift = (a: Translation, b: Translation): number =>
  Math.abs(a.at) - Math.abs(b.at) || Math.abs(a.pitch) - Math.abs(b.pitch) || a.at - b.at || a.pitch - b.pitch;

const closerShift = (t: Translation, than: Translation): boolean => compareShift(t, than) < 0;
