/**
 * Notes and point sets: the one data model every score in earwitness works on.
 *
 * A `Note` is what was played or written: ontime and duration in beats
 * (quarter notes), MIDI note number, morphetic pitch, channel (1–16, as
 * musicians count). A `Point` is a note reduced to the two dimensions a
 * translation acts on: time, on an integer grid, and pitch, in the chosen
 * dimension (chromatic = MIDI note number, morphetic = diatonic step).
 *
 * @example
 *   toPoints([{ onset: 0, duration: 1, pitch: 60, morph: 60, velocity: 90, channel: 1 }], 'chromatic')
 *   // → [{ at: 0, pitch: 60 }]
 */

export interface Note {
  /** Ontime in beats (quarter notes) from the start of the piece or session. */
  onset: number;
  /** Duration in beats. */
  duration: number;
  /** MIDI note number, 0–127 (60 = middle C). */
  pitch: number;
  /** Morphetic pitch (C4 = 60, one step per letter name); equals `pitch` until spelled. */
  morph: number;
  velocity: number;
  /** MIDI channel 1–16. */
  channel: number;
}

export type PitchMode = 'chromatic' | 'morphetic';
export const PITCH_MODES: readonly PitchMode[] = ['chromatic', 'morphetic'];

/**
 * Time grid of points: grains per beat. Exact matching compares integer
 * grains, so onsets read from files of different resolutions (96, 120, 384,
 * 480, 960 ticks per beat all divide 3840) line up exactly, free of
 * floating-point noise.
 */
export const GRAINS_PER_BEAT = 3840;

export interface Point {
  /** Ontime in grains (beats × GRAINS_PER_BEAT), an integer. */
  at: number;
  /** Pitch in the chosen dimension. */
  pitch: number;
}

/** Beats → grains, rounded to the grid. */
export const toGrains = (beats: number): number => Math.round(beats * GRAINS_PER_BEAT);

/** Grains → beats. */
export const toBeats = (grains: number): number => grains / GRAINS_PER_BEAT;

/** Orders points by time, then pitch. */
export const comparePoints = (a: Point, b: Point): number => a.at - b.at || a.pitch - b.pitch;

/**
 * Notes → point set: sorted by time then pitch; two notes with the same
 * ontime and pitch count as one point.
 */
export function toPoints(notes: readonly Note[], mode: PitchMode = 'chromatic'): Point[] {
  const points = notes.map((n) => ({ at: toGrains(n.onset), pitch: mode === 'morphetic' ? n.morph : n.pitch }));
  points.sort(comparePoints);
  const out: Point[] = [];
  for (const p of points) {
    const last = out[out.length - 1];
    if (!last || last.at !== p.at || last.pitch !== p.pitch) out.push(p);
  }
  return out;
}

/** Index of the first point with `at >= grains` in a sorted point set. */
export function lowerBound(points: readonly Point[], grains: number): number {
  let lo = 0;
  let hi = points.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (points[mid].at < grains) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
