/**
 * Deterministic synthetic corpora for the benchmark and the index tests:
 * three voices per piece, each a seeded Markov walk over a major scale
 * (mostly steps, some leaps, rhythms of quavers to half notes), with a
 * library of motifs that recur across pieces, transposed, the way stock
 * figures recur in real repertoires. About four notes a beat, like a
 * chorale or a string trio.
 *
 * @example
 *   const pieces = synthCorpus({ notes: 100_000, seed: 1 });
 *   pieces.length           // → about 100 pieces of about 1,000 points
 *   pieces[0].slice(0, 2)   // → [{ at: 0, pitch: 48 }, { at: 0, pitch: 60 }]
 */
import { type Point, comparePoints, toGrains } from '../../core/note.js';
import { seededRandom } from '../../core/stats.js';

const SCALE = [0, 2, 4, 5, 7, 9, 11];
/** Scale-degree steps of the walk and their weights: stepwise motion dominates, as in most melodies. */
const STEPS = [-4, -3, -2, -1, 0, 1, 2, 3, 4, 7, -7];
const STEP_WEIGHTS = [1, 2, 6, 14, 5, 14, 6, 2, 1, 1, 1];
const DURATIONS = [0.5, 1, 1, 1.5, 2, 0.5, 1];
/** Voices: lowest and highest scale degree (degree 35 = C4), so they keep apart. */
const VOICES: [number, number][] = [
  [21, 33],
  [30, 40],
  [35, 46],
];

/** A recurring figure: scale-degree steps and the durations (beats) of its notes. */
interface Figure {
  steps: number[];
  durations: number[];
}

const pick = <T>(rand: () => number, xs: readonly T[]): T => xs[Math.floor(rand() * xs.length)];

function weighted(rand: () => number): number {
  const total = STEP_WEIGHTS.reduce((s, w) => s + w, 0);
  let r = rand() * total;
  for (let i = 0; i < STEPS.length; i++) {
    r -= STEP_WEIGHTS[i];
    if (r < 0) return STEPS[i];
  }
  return 0;
}

const degreePitch = (degree: number): number => 12 * Math.floor(degree / 7) + SCALE[((degree % 7) + 7) % 7];

/** A library of recurring figures, 4 to 10 notes each. */
export function motifs(seed: number, count = 200): Figure[] {
  const rand = seededRandom(seed);
  return Array.from({ length: count }, () => {
    const n = 4 + Math.floor(rand() * 7);
    return { steps: Array.from({ length: n }, () => weighted(rand)), durations: Array.from({ length: n }, () => pick(rand, DURATIONS) / 2) };
  });
}

/** A piece of about `beats` beats: sorted, de-duplicated points, chromatic pitch. */
export function synthPiece(rand: () => number, library: readonly Figure[], beats: number): Point[] {
  const points: Point[] = [];
  const tonic = Math.floor(rand() * 12) - 6;
  for (const [low, high] of VOICES) {
    let degree = Math.floor((low + high) / 2);
    let t = 0;
    while (t < beats) {
      // A motif now and then, else a free stretch of the walk.
      const motif = rand() < 0.35 ? pick(rand, library) : null;
      const length = motif ? motif.steps.length : 4 + Math.floor(rand() * 8);
      for (let i = 0; i < length && t < beats; i++) {
        degree += motif ? motif.steps[i] : weighted(rand);
        if (degree < low) degree += 7;
        if (degree > high) degree -= 7;
        points.push({ at: toGrains(t), pitch: degreePitch(degree) + tonic });
        t += motif ? motif.durations[i] : pick(rand, DURATIONS) / 2;
      }
      if (rand() < 0.15) t += pick(rand, DURATIONS) / 2;
    }
  }
  points.sort(comparePoints);
  return points.filter((p, i) => i === 0 || comparePoints(points[i - 1], p) !== 0);
}

/** Pieces of 150–350 beats, one at a time, until they hold at least `notes` points: a corpus larger than memory is made as it is indexed. */
export function* synthPieces({ notes, seed }: { notes: number; seed: number }): Generator<Point[]> {
  const rand = seededRandom(seed);
  const library = motifs(seed + 1);
  for (let total = 0; total < notes; ) {
    const piece = synthPiece(rand, library, 150 + Math.floor(rand() * 200));
    total += piece.length;
    yield piece;
  }
}

/** The pieces of `synthPieces`, all at once. */
export const synthCorpus = (size: { notes: number; seed: number }): Point[][] => [...synthPieces(size)];

/** Unrelated material: a walk of the same kind from another seed and another motif library. */
export function unrelated(seed: number, beats: number): Point[] {
  return synthPiece(seededRandom(seed), motifs(seed + 7919), beats);
}
