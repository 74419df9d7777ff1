/**
 * A corpus's notes end to end in typed arrays: what the index file stores,
 * and what each pitch dimension's point sets are made from, with the same
 * result as `toPoints` (ontime on the grain grid, sorted by time then pitch,
 * one point per ontime and pitch).
 *
 * Ontimes and durations are kept in grains, so a note read back from an
 * index sits on the grid its points use (within 1/3840 beat of the file).
 *
 * @example
 *   const flat = flattenNotes(corpus.pieces);
 *   notePoints(flat, 'morphetic')   // → the points of corpusPoints(corpus, 'morphetic'), end to end
 *   pieceNotes(flat, 0)             // → the first piece's notes
 */
import { type Note, type PitchMode, GRAINS_PER_BEAT, toGrains } from './note.js';
import type { Piece } from './corpus.js';
import { type FlatPoints, MAX_GRAIN, MAX_PITCH, lowerBoundAt } from './triple-index.js';

export interface FlatNotes {
  /** Piece p's notes are indices offsets[p] … offsets[p + 1] − 1, sorted by (ontime, MIDI pitch). */
  offsets: Uint32Array;
  /** Ontime in grains from the start of the piece. */
  at: Int32Array;
  /** Duration in grains. */
  duration: Int32Array;
  pitch: Uint8Array;
  morph: Uint8Array;
  velocity: Uint8Array;
  channel: Uint8Array;
  /**
   * Present when the notes are read a piece at a time, the first time the
   * piece is touched (an index opened on demand, bridge/formats/index-file.ts):
   * whatever reads piece p's entries calls it first. It throws when the
   * piece's stored notes fail their check.
   */
  ensure?: (piece: number) => void;
}

const emptyNotes = (pieces: number, notes: number): FlatNotes => ({
  offsets: new Uint32Array(pieces + 1),
  at: new Int32Array(notes),
  duration: new Int32Array(notes),
  pitch: new Uint8Array(notes),
  morph: new Uint8Array(notes),
  velocity: new Uint8Array(notes),
  channel: new Uint8Array(notes),
});

const inRange = (x: number, lo: number, hi: number): boolean => Number.isInteger(x) && x >= lo && x <= hi;

/** Pieces' notes → flat arrays. Throws naming the piece and the note when a value is outside what the arrays hold. */
export function flattenNotes(pieces: readonly Pick<Piece, 'path' | 'notes'>[]): FlatNotes {
  const total = pieces.reduce((s, p) => s + p.notes.length, 0);
  const flat = emptyNotes(pieces.length, total);
  let i = 0;
  pieces.forEach((piece, p) => {
    flat.offsets[p] = i;
    const notes = piece.notes.map((n) => ({ n, at: toGrains(n.onset) })).sort((x, y) => x.at - y.at || x.n.pitch - y.n.pitch);
    for (const { n, at } of notes) {
      const duration = toGrains(n.duration);
      if (!inRange(at, 0, MAX_GRAIN) || !inRange(duration, 0, MAX_GRAIN) || !inRange(n.pitch, 0, 127) || !inRange(n.morph, 0, MAX_PITCH) || !inRange(n.velocity, 0, 127) || !inRange(n.channel, 1, 16)) {
        throw new RangeError(
          `${piece.path}: a note (onset ${n.onset} beats, duration ${n.duration}, pitch ${n.pitch}, morph ${n.morph}, velocity ${n.velocity}, channel ${n.channel}) ` +
            `is outside what an index holds (onset and duration 0…${MAX_GRAIN / GRAINS_PER_BEAT} beats, pitch and velocity 0…127, morph 0…${MAX_PITCH}, channel 1…16)`,
        );
      }
      flat.at[i] = at;
      flat.duration[i] = duration;
      flat.pitch[i] = n.pitch;
      flat.morph[i] = n.morph;
      flat.velocity[i] = n.velocity;
      flat.channel[i] = n.channel;
      i++;
    }
  });
  flat.offsets[pieces.length] = i;
  return flat;
}

/** True when every piece's notes are already sorted by (ontime, pitch) with no two alike: the usual case, which needs no copy. */
function alreadyPoints(notes: FlatNotes, source: Uint8Array): boolean {
  // The arrays in locals: this pass runs once over millions of notes when an index loads, mostly before the optimising compiler has seen it.
  const { offsets, at } = notes;
  const pieces = offsets.length - 1;
  for (let p = 0; p < pieces; p++) {
    const end = offsets[p + 1];
    for (let i = offsets[p] + 1; i < end; i++) if (at[i] === at[i - 1] && source[i] <= source[i - 1]) return false;
  }
  return true;
}

/**
 * The point sets of one pitch dimension. Notes come sorted by MIDI pitch
 * within an ontime; morphetic pitches almost always follow the same order,
 * and the rare group that does not is sorted on its own.
 */
export function notePoints(notes: FlatNotes, mode: PitchMode): FlatPoints {
  const source = mode === 'morphetic' ? notes.morph : notes.pitch;
  const pieces = notes.offsets.length - 1;
  if (alreadyPoints(notes, source)) return { mode, offsets: notes.offsets, at: notes.at, pitch: source };
  const offsets = new Uint32Array(pieces + 1);
  const at = new Int32Array(notes.at.length);
  const pitch = new Uint8Array(notes.at.length);
  const group: number[] = [];
  let n = 0;
  for (let p = 0; p < pieces; p++) {
    offsets[p] = n;
    const end = notes.offsets[p + 1];
    for (let i = notes.offsets[p]; i < end; ) {
      const t = notes.at[i];
      let last = i + 1;
      let sorted = true;
      for (; last < end && notes.at[last] === t; last++) if (source[last] < source[last - 1]) sorted = false;
      if (!sorted) {
        group.length = 0;
        for (let g = i; g < last; g++) group.push(source[g]);
        group.sort((a, b) => a - b);
      }
      for (let g = i; g < last; g++) {
        const value = sorted ? source[g] : group[g - i];
        if (g > i && value === (sorted ? source[g - 1] : group[g - i - 1])) continue;
        at[n] = t;
        pitch[n++] = value;
      }
      i = last;
    }
  }
  offsets[pieces] = n;
  return { mode, offsets, at: at.slice(0, n), pitch: pitch.slice(0, n) };
}

/** A stretch of a piece's time: ontimes in [fromGrains, toGrains). */
export interface GrainSpan {
  fromGrains: number;
  toGrains: number;
}

/**
 * One piece's notes as Note objects, for code that works on notes (excerpts,
 * `--exact`); with a span, only those whose ontime lies in it, read without
 * making the rest.
 *
 * @example
 *   pieceNotes(flat, 0, { fromGrains: 0, toGrains: toGrains(4) })   // → the first piece's notes of its first four beats
 */
export function pieceNotes(notes: FlatNotes, piece: number, span?: GrainSpan): Note[] {
  notes.ensure?.(piece);
  const [first, end] = [notes.offsets[piece], notes.offsets[piece + 1]];
  const from = span ? lowerBoundAt(notes.at, span.fromGrains, first, end) : first;
  const to = span ? lowerBoundAt(notes.at, span.toGrains, from, end) : end;
  const out: Note[] = [];
  for (let i = from; i < to; i++) {
    out.push({
      onset: notes.at[i] / GRAINS_PER_BEAT,
      duration: notes.duration[i] / GRAINS_PER_BEAT,
      pitch: notes.pitch[i],
      morph: notes.morph[i],
      velocity: notes.velocity[i],
      channel: notes.channel[i],
    });
  }
  return out;
}

/** Pieces picked from several flat note sets, end to end in the order given (a rebuild keeps unchanged pieces this way). */
export function joinNotes(parts: readonly { notes: FlatNotes; piece: number }[]): FlatNotes {
  const total = parts.reduce((s, { notes, piece }) => s + notes.offsets[piece + 1] - notes.offsets[piece], 0);
  const out = emptyNotes(parts.length, total);
  let n = 0;
  parts.forEach(({ notes, piece }, p) => {
    notes.ensure?.(piece);
    const from = notes.offsets[piece];
    const to = notes.offsets[piece + 1];
    out.offsets[p] = n;
    for (const field of ['at', 'duration', 'pitch', 'morph', 'velocity', 'channel'] as const) {
      (out[field] as Uint8Array).set((notes[field] as Uint8Array).subarray(from, to), n);
    }
    n += to - from;
  });
  out.offsets[parts.length] = n;
  return out;
}
