/**
 * Point sets for tests: written as [beat, pitch] pairs, and drawn at random
 * by fast-check on a sixteenth-note grid, where coincidences are common.
 *
 * @example
 *   pts([0, 60], [1, 62])                  // → [{ at: 0, pitch: 60 }, { at: 3840, pitch: 62 }]
 *   fc.assert(fc.property(pointSet(), (p) => p.length > 0))
 */
import fc from 'fast-check';
import { type Note, type Point, comparePoints, toGrains } from '../../core/note.js';

export const pts = (...pairs: [number, number][]): Point[] => pairs.map(([beat, pitch]) => ({ at: toGrains(beat), pitch })).sort(comparePoints);

export const shift = (points: readonly Point[], beats: number, pitch: number): Point[] =>
  points.map((p) => ({ at: p.at + toGrains(beats), pitch: p.pitch + pitch }));

/** Notes moved in time and pitch, for chromatic matching (morphetic pitch is left as it was, not respelled). */
export const moveNotes = (notes: readonly Note[], beats: number, semitones: number): Note[] =>
  notes.map((n) => ({ ...n, onset: n.onset + beats, pitch: n.pitch + semitones }));

/** Notes for a Piece or a query, one beat long unless given. */
export const notesOf = (pairs: readonly [number, number][], duration = 1): Note[] =>
  pairs.map(([onset, pitch]) => ({ onset, duration, pitch, morph: pitch, velocity: 80, channel: 1 })).sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);

/** A random point set: distinct points on a sixteenth grid over `beats` beats, pitches in a twelfth. */
export const pointSet = ({ min = 1, max = 24, beats = 16 } = {}): fc.Arbitrary<Point[]> =>
  fc
    .uniqueArray(fc.tuple(fc.integer({ min: 0, max: beats * 4 - 1 }), fc.integer({ min: 55, max: 74 })), {
      minLength: min,
      maxLength: max,
      selector: ([s, p]) => `${s}:${p}`,
    })
    .map((cells) => pts(...cells.map(([s, p]): [number, number] => [s / 4, p])));

/** A translation on the same grid: up to ±`beats` beats, ±12 steps. */
export const translation = (beats = 32): fc.Arbitrary<[number, number]> =>
  fc.tuple(fc.integer({ min: -beats * 4, max: beats * 4 }).map((s) => s / 4), fc.integer({ min: -12, max: 12 }));
