/**
 * A small seeded synthetic corpus (test/bench/synthetic.ts), its index and
 * brute-force matcher, and a performance against it: what the streaming and
 * live matcher tests play.
 *
 * @example
 *   for (const p of session()) stream.add(p);
 */
import { type Point, comparePoints, toGrains } from '../../core/note.js';
import type { CorpusPoints } from '../../core/corpus.js';
import { exactMatcher } from '../helpers/matchers.js';
import { seededRandom } from '../../core/stats.js';
import { buildTriples, corpusIndex, flattenPoints } from '../../core/triple-index.js';
import { synthCorpus, unrelated } from '../bench/synthetic.js';
import { pieceOf } from './corpus.js';

export const W = 16;
export const corpus = synthCorpus({ notes: 5_000, seed: 21 });
export const view: CorpusPoints = { mode: 'chromatic', pieces: corpus.map((_, i) => pieceOf(`p${i}.mid`, [])), points: corpus, size: corpus.flat().length };
export const index = corpusIndex(buildTriples(flattenPoints(view)));
export const exact = exactMatcher(view, W);

/** A performance: a corpus passage played a fifth up from beat 100 of the session, a stretch of new material, then another passage with 20% of pitches off by a step. */
export function session(): Point[] {
  const rand = seededRandom(4);
  const from = (piece: number, beat: number, beats: number, at: number, transpose: number, alter: number): Point[] =>
    corpus[piece]
      .filter((p) => p.at >= toGrains(beat) && p.at < toGrains(beat + beats))
      .map((p) => ({ at: p.at - toGrains(beat) + toGrains(at), pitch: p.pitch + transpose + (rand() < alter ? 1 : 0) }));
  const fresh = unrelated(5, 24).map((p) => ({ at: p.at + toGrains(132), pitch: p.pitch }));
  const all = [...from(1, 30, 32, 100, 7, 0), ...fresh, ...from(3, 8, 32, 156, -2, 0.2)].sort(comparePoints);
  return all.filter((p, i) => i === 0 || comparePoints(all[i - 1], p) !== 0);
}
