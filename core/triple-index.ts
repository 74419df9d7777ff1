/**
 * The corpus index: every piece's points end to end in typed arrays, and an
 * inverted index of note triples over them.
 *
 * A triple is a point (its anchor) and two of the next `partners` points of
 * its piece, all within `horizonBeats`. Its key is the two (time difference
 * in grains, pitch interval) pairs from the anchor, which a translation
 * leaves unchanged; its posting is the anchor's global index. Single pairs
 * are too common to filter with: a corpus of 100,000 synthetic notes has
 * only about 500 distinct pair keys, the commonest with 9,000 postings,
 * while pairs of pairs are thousands of times rarer.
 *
 * Postings are stored CSR-style: the distinct keys ascending, where each
 * key's run of anchors starts, and the anchors. No JS object per note, so
 * ten million notes fit in a few hundred megabytes and load without parsing.
 * In memory each point's ontime, piece and pitch also sit side by side in
 * one int32 pair, so a vote reads one cache line.
 *
 * @example
 *   const index = corpusIndex(buildTriples(flattenPoints(corpusPoints(corpus, 'chromatic'))));
 *   const k = index.find(tripleKey(960, 2, 1920, 4));   // two quavers rising by tones
 *   index.anchors.subarray(index.starts[k], index.starts[k + 1])   // → the first point of every such triple
 */
import type { CorpusPoints } from './corpus.js';
import { type PitchMode, type Point, toGrains } from './note.js';
import { type KeyedRecords, runStarts, sortRecords } from './keyed-sort.js';

export interface TripleShape {
  /** A point's triples take two of its next `partners` points… */
  partners: number;
  /** …sounding at most this many beats after it. */
  horizonBeats: number;
}

/** The corpus side: three triples a point keep the postings at 12 bytes a note. */
export const CORPUS_TRIPLES: TripleShape = { partners: 3, horizonBeats: 8 };

/** Limits the key packing relies on: pitches fit a byte, time differences 15 bits. */
export const MAX_HORIZON_BEATS = 8;
export const MAX_PITCH = 255;
/** Local ontimes are int32 grains: about 559,000 beats per piece. */
export const MAX_GRAIN = 2 ** 31 - 1;

/** Pieces an index holds at most: the piece number shares an int32 with a pitch. */
export const MAX_PIECES = 2 ** 22;

const PART = 2 ** 24;
const part = (dt: number, dp: number): number => dt * 512 + dp + 256;

/** One exact number per triple: (dt, dp) to the first partner and to the second, dt < 2^15 grains, dp in −255…255. */
export const tripleKey = (dt1: number, dp1: number, dt2: number, dp2: number): number => part(dt1, dp1) * PART + part(dt2, dp2);

/** Every piece's points, sorted by (ontime, pitch) within the piece, end to end. */
export interface FlatPoints {
  mode: PitchMode;
  /** Piece p's points are indices offsets[p] … offsets[p + 1] − 1. */
  offsets: Uint32Array;
  /** Ontime in grains from the start of the piece. */
  at: Int32Array;
  pitch: Uint8Array;
  /**
   * Present when the points are read a piece at a time, the first time the
   * piece is touched (an index opened on demand, bridge/formats/index-file.ts):
   * whatever reads piece p's entries of `at` and `pitch` calls it first. It
   * throws when the piece's stored notes fail their check.
   */
  ensure?: (piece: number) => void;
}

/** The stored part of an index: points and postings. */
export interface TriplePostings {
  points: FlatPoints;
  shape: TripleShape;
  /** Distinct triple keys, ascending. */
  keys: Float64Array;
  /** Key k's anchors are anchors[starts[k] … starts[k + 1] − 1]. */
  starts: Uint32Array;
  anchors: Uint32Array;
}

/**
 * Entries [from, to) of a stored array that is not held in memory: how an
 * index file opened on demand hands over a key's postings the first time
 * they are voted from (bridge/formats/index-file.ts).
 */
export type RunReader<T extends Uint32Array | Uint8Array = Uint32Array> = (from: number, to: number) => T;

/** Postings an index is made from: the anchors in memory, or read a key's run at a time. */
export type StoredPostings = Omit<TriplePostings, 'anchors'> & { anchors: Uint32Array | RunReader };

/** A stored array's reader: a view of it when it is in memory. */
export const runsOf = <T extends Uint32Array | Uint8Array>(stored: T | RunReader<T>): RunReader<T> =>
  typeof stored === 'function' ? stored : (from, to) => stored.subarray(from, to) as T;

/** Throws unless a triple shape is usable. */
export function checkTripleShape(shape: TripleShape): void {
  if (!(Number.isInteger(shape.partners) && shape.partners >= 2 && shape.partners <= 16)) {
    throw new RangeError(`triple partners must be a whole number from 2 to 16, got ${shape.partners}`);
  }
  if (!(shape.horizonBeats > 0 && shape.horizonBeats <= MAX_HORIZON_BEATS)) {
    throw new RangeError(`triple horizon must be more than 0 and at most ${MAX_HORIZON_BEATS} beats, got ${shape.horizonBeats}`);
  }
}

/** Point sets → flat typed arrays. Throws naming the piece when a point is outside the limits above. */
export function flattenPoints(view: Pick<CorpusPoints, 'mode' | 'points' | 'pieces'>): FlatPoints {
  const total = view.points.reduce((s, p) => s + p.length, 0);
  const offsets = new Uint32Array(view.points.length + 1);
  const at = new Int32Array(total);
  const pitch = new Uint8Array(total);
  let n = 0;
  view.points.forEach((points: readonly Point[], p) => {
    offsets[p] = n;
    for (const pt of points) {
      if (!(Number.isInteger(pt.at) && pt.at >= 0 && pt.at <= MAX_GRAIN) || !(Number.isInteger(pt.pitch) && pt.pitch >= 0 && pt.pitch <= MAX_PITCH)) {
        const where = view.pieces[p]?.path ?? `piece ${p}`;
        throw new RangeError(`${where}: a point at ${pt.at} grains, pitch ${pt.pitch} is outside the index's range (ontime 0…${MAX_GRAIN} grains, pitch 0…${MAX_PITCH})`);
      }
      at[n] = pt.at;
      pitch[n] = pt.pitch;
      n++;
    }
  });
  offsets[view.points.length] = n;
  return { mode: view.mode, offsets, at, pitch };
}

/**
 * Calls `visit(a, b, c)` for every triple of a sorted run of points ending
 * at `c`: a < b < c, c − a ≤ partners, at[c] − at[a] ≤ horizon. The same rule
 * makes the corpus's triples and a query's, so a passage and its transposed
 * copy share their triples.
 */
export function triplesEndingAt(at: ArrayLike<number>, from: number, c: number, partners: number, horizonGrains: number, visit: (a: number, b: number, c: number) => void): void {
  const stop = Math.max(from, c - partners);
  for (let a = c - 2; a >= stop && at[c] - at[a] <= horizonGrains; a--) {
    for (let b = a + 1; b < c; b++) visit(a, b, c);
  }
}

/**
 * Every triple of the points as a record: its key's two halves (the step to
 * the first partner, then to the second) and its anchor, in the order the
 * pieces and their points come; `base` is added to every anchor (a piece
 * indexed after `base` points of others).
 */
export function tripleRecords(points: FlatPoints, shape: TripleShape = CORPUS_TRIPLES, base = 0): KeyedRecords {
  checkTripleShape(shape);
  const horizon = toGrains(shape.horizonBeats);
  const { at, pitch, offsets } = points;
  const pieces = offsets.length - 1;
  const each = (visit: (a: number, b: number, c: number) => void): void => {
    for (let p = 0; p < pieces; p++) for (let c = offsets[p] + 2; c < offsets[p + 1]; c++) triplesEndingAt(at, offsets[p], c, shape.partners, horizon, visit);
  };
  let total = 0;
  each(() => total++);
  const hi = new Uint32Array(total);
  const lo = new Uint32Array(total);
  const anchor = new Uint32Array(total);
  let n = 0;
  each((a, b, c) => {
    hi[n] = part(at[b] - at[a], pitch[b] - pitch[a]);
    lo[n] = part(at[c] - at[a], pitch[c] - pitch[a]);
    anchor[n++] = a + base;
  });
  return { hi, lo, fields: [anchor] };
}

/** A triple's key from its record's halves. */
export const keyOfHalves = (hi: number, lo: number): number => hi * PART + lo;

/** Builds the postings: the triples' records sorted by key (core/keyed-sort.ts), no per-triple object. */
export function buildTriples(points: FlatPoints, shape: TripleShape = CORPUS_TRIPLES): TriplePostings {
  const sorted = sortRecords(tripleRecords(points, shape));
  const runs = runStarts(sorted);
  const keys = new Float64Array(runs.length);
  for (let d = 0; d < runs.length; d++) keys[d] = keyOfHalves(sorted.hi[runs[d]], sorted.lo![runs[d]]);
  const starts = new Uint32Array(runs.length + 1);
  starts.set(runs);
  starts[runs.length] = sorted.hi.length;
  return { points, shape, keys, starts, anchors: sorted.fields[0] as Uint32Array };
}

/** An index ready to query: the postings, a hash table over their keys, and the voted postings' points beside them. */
export interface CorpusIndex extends StoredPostings {
  /**
   * Posting s's anchor point: posted[2s] = ontime, posted[2s + 1] = piece ×
   * 256 + pitch, so voting reads postings in order instead of hopping over
   * the points: filled in for key position k by `gather(k)`, the first time it
   * is voted from, so loading pays nothing.
   */
  posted: Int32Array;
  gather(k: number): void;
  /** Number of pieces. */
  pieces: number;
  /** Position of a key in `keys`, or −1 when no corpus triple has it. */
  find(key: number): number;
}

const hashKey = (key: number, bits: number): number => {
  const hi = Math.floor(key / PART);
  return Math.imul(hi ^ Math.imul(key - hi * PART, 0x85ebca6b), 0x9e3779b1) >>> (32 - bits);
};

/**
 * Adds what queries need to stored postings: linear in the keys, nothing per
 * point, so loading stays fast. Anchors given as a RunReader are read a key at a
 * time, the first time the key votes; one naming a point the index does not
 * hold (a damaged file) is a RangeError.
 */
export function corpusIndex(postings: StoredPostings): CorpusIndex {
  const { keys, points } = postings;
  const bits = Math.max(4, Math.ceil(Math.log2(keys.length * 2 + 1)));
  const slots = new Int32Array(1 << bits);
  const mask = (1 << bits) - 1;
  for (let k = 0; k < keys.length; k++) {
    let s = hashKey(keys[k], bits);
    while (slots[s] !== 0) s = (s + 1) & mask;
    slots[s] = k + 1;
  }
  const pieces = points.offsets.length - 1;
  if (pieces > MAX_PIECES) throw new RangeError(`an index holds at most ${MAX_PIECES} pieces, this corpus has ${pieces}`);
  const { at, pitch, offsets } = points;
  const { starts } = postings;
  const run = runsOf(postings.anchors);
  // Zero pages cost no memory until written: only the keys voted from are ever gathered.
  const posted = new Int32Array(starts[keys.length] * 2);
  const gathered = new Uint8Array(keys.length);
  return {
    ...postings,
    posted,
    pieces,
    gather(k) {
      if (gathered[k]) return;
      const from = starts[k];
      const anchors = run(from, starts[k + 1]);
      for (let i = 0; i < anchors.length; i++) {
        const a = anchors[i];
        if (a >= at.length) throw new RangeError(`posting ${from + i} of the triple index names point ${a}, but the index holds ${at.length} points`);
        const piece = pieceAt(offsets, a);
        points.ensure?.(piece);
        posted[2 * (from + i)] = at[a];
        posted[2 * (from + i) + 1] = (piece << 8) | pitch[a];
      }
      gathered[k] = 1;
    },
    find(key) {
      for (let s = hashKey(key, bits); ; s = (s + 1) & mask) {
        const k = slots[s] - 1;
        if (k < 0) return -1;
        if (keys[k] === key) return k;
      }
    },
  };
}

/**
 * The piece point i belongs to, by binary search of the pieces' offsets:
 * asked once per posting gathered, so no array of every point's piece is
 * made (at a hundred million points it would be 400 MB, made at every load).
 */
export function pieceAt(offsets: Uint32Array, i: number): number {
  let lo = 0;
  let hi = offsets.length - 2;
  while (lo < hi) {
    const mid = (lo + hi + 1) >>> 1;
    if (offsets[mid] <= i) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** Index of the first point in [from, to) with ontime at or after `t` grains. */
export function lowerBoundAt(at: ArrayLike<number>, t: number, from: number, to: number): number {
  let lo = from;
  let hi = to;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (at[mid] < t) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Reads points kept on first touch (`ensure`) ahead of need, `step` pieces
 * at a time, yielding the pieces read so far after each step: a caller with
 * idle time (the daemon's scoring worker between notes) steps through it, so
 * the first notes played after a start touch pieces already read. Points all
 * in memory end it at once.
 *
 * @example
 *   const ahead = readAhead(flat, 16);
 *   ahead.next()   // → { value: 16, done: false }, pieces 0–15 read
 */
export function* readAhead(points: FlatPoints, step = 16): Generator<number, void> {
  const ensure = points.ensure;
  if (!ensure) return;
  const pieces = points.offsets.length - 1;
  for (let p = 0; p < pieces; p++) {
    ensure(p);
    if ((p + 1) % step === 0) yield p + 1;
  }
}

/** A piece's points as Point objects, for code that works on point sets (`--exact`, the baseline's samples). */
export function piecePoints(points: FlatPoints, piece: number): Point[] {
  points.ensure?.(piece);
  const out: Point[] = [];
  for (let i = points.offsets[piece]; i < points.offsets[piece + 1]; i++) out.push({ at: points.at[i], pitch: points.pitch[i] });
  return out;
}
