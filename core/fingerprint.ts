/**
 * Finding quotations played at another tempo, by symbolic fingerprinting
 * (Arzt, Böck & Widmer 2012, "Fast identification of piece and score position
 * via symbolic fingerprinting", ISMIR): the tempo-free candidate source of
 * the matching pipeline (core/pipeline.ts).
 *
 * Every note a is paired with each of the next few notes b after it, and b
 * with each of the next few notes c after b. The triple's key is (pitch of b −
 * a, pitch of c − b, ratio of the inter-onset intervals (t_c − t_b) / (t_b −
 * t_a) on a logarithmic grid): transposing or changing the tempo leaves it
 * unchanged. The corpus's triples are stored by key (`buildFingerprints`,
 * written into the index file by `corpus build`). A window's triples look
 * their keys up, rarest first until a budget of postings is read; each hit
 * votes for a (piece, position, time scale, transposition) cell; the
 * best-voted cells are verified by rescaling the window's time to the corpus
 * passage's and matching within a tolerance, then the time scale is refitted
 * by least squares over the matched notes and verified once more.
 *
 * `timeScale` is played duration / corpus duration: 1.5 means the passage
 * was played half as long again as written (slower), 0.5 twice as fast.
 *
 * @example
 *   const table = buildFingerprints(flatPoints);
 *   const source = fingerprintCandidates(flatPoints, table);
 *   source.best({ points: playedSlower, startGrains: 0 }, verifier(flatPoints, 0.05), toGrains(16))
 *   // → { piece: 2, pieceStart: 4, transposition: 0, matched: 30, excerptNotes: 30, score: 1, timeScale: 1.5 }
 */
import { type Point, GRAINS_PER_BEAT, comparePoints, toGrains } from './note.js';
import { type MatchWindow, type WindowMatch, betterMatch } from './match.js';
import { type FlatPoints, type RunReader, pieceAt, runsOf } from './triple-index.js';
import { toleranceMatching } from './tolerance.js';
import { type Span, type Verifier, excerptLines } from './verify.js';
import type { CandidateSource } from './index-match.js';
import { mostCounted } from './votes.js';
import { type KeyedRecords, runStarts, sortRecords } from './keyed-sort.js';

/** Which triples the table holds: stored with it, since a query must make its triples the same way. */
export interface FingerprintShape {
  /** Each note pairs with this many later notes, and each of those with as many after it (at most 16). */
  fanOut: number;
  /** Onsets closer than this many beats (in the passage's own time) are not a step in time. */
  minGap: number;
}

export interface FingerprintSettings {
  /** Slowest and fastest tempo ratios searched (played / corpus duration). */
  minScale: number;
  maxScale: number;
  /** Best-voted cells verified per window. */
  candidates: number;
  /** Tolerance in corpus beats of the verifying match; a time scale estimated from notes is never exact. */
  tolerance: number;
  /** Postings read per window, rarest key first… */
  voteBudget: number;
  /** …but at least this many keys looked up, so a window of common figures still votes… */
  minTriples: number;
  /** …save keys posted more often than this, never read: a figure in that many places says little of where a window is from, and reading it costs many windows' budgets. */
  maxPostings: number;
}

export const FINGERPRINT_SHAPE: FingerprintShape = { fanOut: 4, minGap: 0.125 };
export const DEFAULT_FINGERPRINT: FingerprintSettings = { minScale: 0.5, maxScale: 2, candidates: 4, tolerance: 0.05, voteBudget: 2_000, minTriples: 6, maxPostings: 16_000 };

/** The corpus's triples by key, as the index file stores them. */
export interface FingerprintTable {
  shape: FingerprintShape;
  /** Distinct keys, ascending. */
  keys: Uint32Array;
  /** Key k's triples are entries starts[k] … starts[k + 1] − 1. */
  starts: Uint32Array;
  /** Each triple's first note, as an index into the points of all pieces end to end. */
  anchors: Uint32Array;
  /** Where its other two notes are: (b − first b) × 16 + (c − first c), the firsts being the earliest notes minGap or more after a and after b. */
  codes: Uint8Array;
}

/** A table as matching reads it: the anchors and codes in memory, or read a key's run at a time (core/triple-index.ts RunReader). */
export type StoredFingerprints = Omit<FingerprintTable, 'anchors' | 'codes'> & { anchors: Uint32Array | RunReader; codes: Uint8Array | RunReader<Uint8Array> };

/** Width of a ratio bin, in natural-log units: simple ratios (1, 2, 3/2, 4/3, 3) fall well inside their bins. */
const RATIO_STEP = 0.1;
/** Vote cells: one beat of corpus position, 4% of time scale. */
const POSITION_CELL = GRAINS_PER_BEAT;
const SCALE_CELL = 0.04;
/** Cells ranked with their neighbours' votes: this many per place verified, the best-voted on their own. */
const OWN_VOTES_RANKED = 16;
/** How far (grains) verification looks from a cell's estimated position. */
const NEAR_WITHIN = 2 * GRAINS_PER_BEAT;

const clampInterval = (d: number): number => Math.max(-127, Math.min(127, d));

/** A triple's key from its onsets and pitches: pitch intervals within ±127, ratio bins within ±127; under 2^24. */
function fingerprintKey(ta: number, tb: number, tc: number, pa: number, pb: number, pc: number): number {
  const r = Math.max(-127, Math.min(127, Math.round(Math.log((tc - tb) / (tb - ta)) / RATIO_STEP)));
  return ((clampInterval(pb - pa) + 128) * 256 + (clampInterval(pc - pb) + 128)) * 256 + (r + 128);
}

/** Throws unless a fingerprint shape is usable. */
export function checkFingerprintShape(shape: FingerprintShape): void {
  if (!(Number.isInteger(shape.fanOut) && shape.fanOut >= 1 && shape.fanOut <= 16)) throw new RangeError(`fingerprint fanOut must be a whole number from 1 to 16, got ${shape.fanOut}`);
  if (!(shape.minGap > 0 && Number.isFinite(shape.minGap))) throw new RangeError(`fingerprint minGap must be a positive number of beats, got ${shape.minGap}`);
}

/** steps[i − from]: the first point after i at least `gap` grains later (to when none), for every i of [from, to); rises with i, so one pass finds all. */
let steps = new Int32Array(1024);

/**
 * Calls `emit(a, b, c, code)` for every triple of a sorted run of onsets
 * [from, to): b is the i-th note from the first minGap or more after a, c
 * the j-th from the first minGap or more after b, and code is i × 16 + j.
 */
function eachTriple(at: ArrayLike<number>, from: number, to: number, shape: FingerprintShape, emit: (a: number, b: number, c: number, code: number) => void): void {
  const gap = toGrains(shape.minGap);
  if (steps.length < to - from) steps = new Int32Array(2 ** Math.ceil(Math.log2(to - from)));
  for (let i = from, j = from + 1; i < to; i++) {
    if (j <= i) j = i + 1;
    while (j < to && at[j] < at[i] + gap) j++;
    steps[i - from] = j;
  }
  for (let a = from; a < to; a++) {
    const b0 = steps[a - from];
    for (let b = b0; b < Math.min(to, b0 + shape.fanOut); b++) {
      const c0 = steps[b - from];
      for (let c = c0; c < Math.min(to, c0 + shape.fanOut); c++) emit(a, b, c, (b - b0) * 16 + (c - c0));
    }
  }
}

/**
 * Every fingerprint triple of the points as a record: its key, its first
 * note (plus `base`, as in core/triple-index.ts tripleRecords) and its code,
 * in the order the pieces and their points come.
 */
export function fingerprintRecords(points: FlatPoints, shape: FingerprintShape = FINGERPRINT_SHAPE, base = 0): KeyedRecords {
  checkFingerprintShape(shape);
  const { at, pitch, offsets } = points;
  const pieces = offsets.length - 1;
  const each = (emit: (a: number, b: number, c: number, code: number) => void): void => {
    for (let p = 0; p < pieces; p++) eachTriple(at, offsets[p], offsets[p + 1], shape, emit);
  };
  let total = 0;
  each(() => total++);
  const key = new Uint32Array(total);
  const anchor = new Uint32Array(total);
  const code = new Uint8Array(total);
  let n = 0;
  each((a, b, c, made) => {
    key[n] = fingerprintKey(at[a], at[b], at[c], pitch[a], pitch[b], pitch[c]);
    anchor[n] = a + base;
    code[n++] = made;
  });
  return { hi: key, lo: null, fields: [anchor, code] };
}

/**
 * The fingerprint table of every piece's points: the triples' records sorted
 * by key (core/keyed-sort.ts); within a key, triples keep the order they
 * were made in. No object per triple.
 */
export function buildFingerprints(points: FlatPoints, shape: FingerprintShape = FINGERPRINT_SHAPE): FingerprintTable {
  const sorted = sortRecords(fingerprintRecords(points, shape));
  const runs = runStarts(sorted);
  const starts = new Uint32Array(runs.length + 1);
  starts.set(runs);
  starts[runs.length] = sorted.hi.length;
  return { shape, keys: runs.map((s) => sorted.hi[s]), starts, anchors: sorted.fields[0] as Uint32Array, codes: sorted.fields[1] as Uint8Array };
}

/** Open-addressing slots over a table's keys (position + 1, 0 = empty), made once per table when first searched. */
const keySlots = new WeakMap<Uint32Array, Int32Array>();

function slotsOf(keys: Uint32Array): Int32Array {
  const known = keySlots.get(keys);
  if (known) return known;
  const slots = new Int32Array(2 ** Math.max(4, Math.ceil(Math.log2(keys.length * 2 + 1))));
  const mask = slots.length - 1;
  for (let k = 0; k < keys.length; k++) {
    let s = Math.imul(keys[k], 0x9e3779b1) & mask;
    while (slots[s] !== 0) s = (s + 1) & mask;
    slots[s] = k + 1;
  }
  keySlots.set(keys, slots);
  return slots;
}

/** Position of `key` in the table's keys, or −1. */
function findKey(keys: Uint32Array, slots: Int32Array, key: number): number {
  const mask = slots.length - 1;
  for (let s = Math.imul(key, 0x9e3779b1) & mask; ; s = (s + 1) & mask) {
    const k = slots[s] - 1;
    if (k < 0 || keys[k] === key) return k;
  }
}

/** The first point after `i` (before `end`) at least `gap` grains later: a step or two on, so walked, not searched. */
function firstAfter(at: ArrayLike<number>, i: number, gap: number, end: number): number {
  const t = at[i] + gap;
  let j = i + 1;
  while (j < end && at[j] < t) j++;
  return j;
}

/**
 * What a vote reads of each stored triple of key k, side by side in the
 * key's own array: run[3i] = piece × 256 + pitch of its first note,
 * run[3i + 1] = that note's ontime, run[3i + 2] = grains from it to the
 * triple's last note. Made the first time the key votes, so a vote reads its
 * postings in order instead of searching the pieces and walking the points,
 * and only keys voted from take any memory (one array for every triple would
 * pass the largest array there is at a hundred million notes).
 */
type PostedRuns = (k: number) => Int32Array;

const postedOf = new WeakMap<StoredFingerprints, PostedRuns>();

function postedRuns(flat: FlatPoints, table: StoredFingerprints): PostedRuns {
  const known = postedOf.get(table);
  if (known) return known;
  const { at, pitch, offsets } = flat;
  const { starts } = table;
  const [anchorRuns, codeRuns] = [runsOf(table.anchors), runsOf(table.codes)];
  const gap = toGrains(table.shape.minGap);
  const made = new Map<number, Int32Array>();
  const runOf: PostedRuns = (k) => {
    const known = made.get(k);
    if (known) return known;
    const from = starts[k];
    const anchors = anchorRuns(from, starts[k + 1]);
    const codes = codeRuns(from, starts[k + 1]);
    const run = new Int32Array(3 * anchors.length);
    for (let i = 0; i < anchors.length; i++) {
      const ca = anchors[i];
      if (ca >= at.length) throw new RangeError(`fingerprint ${from + i} names point ${ca}, but the index holds ${at.length} points`);
      const piece = pieceAt(offsets, ca);
      flat.ensure?.(piece);
      const end = offsets[piece + 1];
      const cb = firstAfter(at, ca, gap, end) + (codes[i] >> 4);
      const cc = firstAfter(at, cb, gap, end) + (codes[i] & 15);
      if (cc >= end) throw new RangeError(`fingerprint ${from + i} reaches past the end of piece ${piece}`);
      run[3 * i] = piece * 256 + pitch[ca];
      run[3 * i + 1] = at[ca];
      run[3 * i + 2] = at[cc] - at[ca];
    }
    made.set(k, run);
    return run;
  };
  postedOf.set(table, runOf);
  return runOf;
}

/** A window's points on the corpus's time: offsets from the window start divided by `scale`. */
export function scaleTime(window: readonly Point[], startGrains: number, scale: number): Point[] {
  return window.map((p) => ({ at: startGrains + Math.round((p.at - startGrains) / scale), pitch: p.pitch })).sort(comparePoints);
}

/**
 * Vote cells in typed arrays, open addressing on (piece, corpus position of
 * the window start in beats, time-scale bin, transposition): a window's
 * thousands of votes allocate nothing. Each cell sums its votes' log time
 * scales and corpus starts, for the place they agree on.
 */
class Cells {
  private bits = 10;
  private slots = new Int32Array(1 << this.bits);
  piece = new Int32Array(1 << (this.bits - 1));
  position = new Int32Array(this.piece.length);
  scale = new Int32Array(this.piece.length);
  pitch = new Int32Array(this.piece.length);
  votes = new Int32Array(this.piece.length);
  logScale = new Float64Array(this.piece.length);
  start = new Float64Array(this.piece.length);
  size = 0;

  clear(): void {
    this.slots.fill(0);
    this.size = 0;
  }

  /** The cell's entry, or −1. */
  find(piece: number, position: number, scale: number, pitch: number): number {
    const s = this.slotOf(piece, position, scale, pitch);
    return this.slots[s] - 1;
  }

  add(piece: number, position: number, scale: number, pitch: number, logScale: number, start: number): void {
    let s = this.slotOf(piece, position, scale, pitch);
    if (this.slots[s] === 0) {
      if (this.size === this.piece.length) {
        this.grow();
        s = this.slotOf(piece, position, scale, pitch);
      }
      const e = this.size++;
      this.piece[e] = piece;
      this.position[e] = position;
      this.scale[e] = scale;
      this.pitch[e] = pitch;
      this.votes[e] = 0;
      this.logScale[e] = 0;
      this.start[e] = 0;
      this.slots[s] = e + 1;
    }
    const e = this.slots[s] - 1;
    this.votes[e]++;
    this.logScale[e] += logScale;
    this.start[e] += start;
  }

  private slotOf(piece: number, position: number, scale: number, pitch: number): number {
    const mask = (1 << this.bits) - 1;
    let s = (Math.imul(piece, 0x9e3779b1) ^ Math.imul(position, 0x85ebca6b) ^ Math.imul(scale * 512 + pitch, 0xc2b2ae35)) >>> (32 - this.bits);
    for (let e = this.slots[s] - 1; e >= 0; e = this.slots[s] - 1) {
      if (this.piece[e] === piece && this.position[e] === position && this.scale[e] === scale && this.pitch[e] === pitch) break;
      s = (s + 1) & mask;
    }
    return s;
  }

  private grow(): void {
    const n = this.piece.length * 2;
    const copy = <T extends Int32Array | Float64Array>(a: T): T => {
      const b = new (a.constructor as new (n: number) => T)(n);
      b.set(a);
      return b;
    };
    [this.piece, this.position, this.scale, this.pitch, this.votes] = [this.piece, this.position, this.scale, this.pitch, this.votes].map(copy);
    [this.logScale, this.start] = [this.logScale, this.start].map(copy);
    this.bits++;
    this.slots = new Int32Array(1 << this.bits);
    for (let e = 0; e < this.size; e++) this.slots[this.slotOf(this.piece[e], this.position[e], this.scale[e], this.pitch[e])] = e + 1;
  }
}

/** One table for every window: a fresh one would grow to the same size each time. */
const cells = new Cells();


/** The window's triples found in the table, kept between windows: sort keys, and (key, first note, last note) three by three. */
const scratch = {
  order: new Float64Array(1024),
  found: new Int32Array(3 * 1024),
  grow(): void {
    const order = new Float64Array(2 * this.order.length);
    const found = new Int32Array(3 * order.length);
    order.set(this.order);
    found.set(this.found);
    this.order = order;
    this.found = found;
  },
};

/** Votes of the window's triples, rarest key first, into `cells`. */
function vote(flat: FlatPoints, table: StoredFingerprints, settings: FingerprintSettings, window: MatchWindow): void {
  const points = window.points;
  const qa = points.map((p) => p.at);
  const slots = slotsOf(table.keys);
  // Each triple the table has, as one number: its postings, then the order found, sorted rarest first (a typed sort, by value); the key and notes beside it.
  let triples = 0;
  eachTriple(qa, 0, points.length, table.shape, (a, b, c) => {
    const k = findKey(table.keys, slots, fingerprintKey(qa[a], qa[b], qa[c], points[a].pitch, points[b].pitch, points[c].pitch));
    if (k < 0) return;
    if (triples === scratch.order.length) scratch.grow();
    scratch.order[triples] = (table.starts[k + 1] - table.starts[k]) * 2 ** 21 + triples;
    const f = 3 * triples++;
    scratch.found[f] = k;
    scratch.found[f + 1] = a;
    scratch.found[f + 2] = c;
  });
  const order = scratch.order.subarray(0, triples).sort();
  const found = scratch.found;
  const [logMin, logMax] = [Math.log(settings.minScale), Math.log(settings.maxScale)];
  const runOf = postedRuns(flat, table);
  cells.clear();
  let spent = 0;
  for (let r = 0; r < order.length; r++) {
    const size = Math.floor(order[r] / 2 ** 21);
    const f = 3 * (order[r] % 2 ** 21);
    const k = found[f];
    const a = found[f + 1];
    const c = found[f + 2];
    // Rarest first: past the first key over maxPostings, every key is.
    if (size > settings.maxPostings || (r >= settings.minTriples && spent + size > settings.voteBudget)) break;
    spent += size;
    const run = runOf(k);
    const q0 = points[a];
    const span = points[c].at - q0.at;
    const lead = q0.at - window.startGrains;
    for (let j = 0; j < run.length; j += 3) {
      const piecePitch = run[j];
      const piece = piecePitch >> 8;
      if (piece === window.exclude) continue;
      const scale = span / run[j + 2];
      const logScale = Math.log(scale);
      if (logScale < logMin || logScale > logMax) continue;
      const start = run[j + 1] - lead / scale;
      cells.add(piece, Math.floor(start / POSITION_CELL), Math.round(logScale / SCALE_CELL), q0.pitch - (piecePitch & 255), logScale, start);
    }
  }
}

/** An estimated alignment: corpus piece, corpus start of the window (grains), time scale, transposition. */
interface Alignment {
  piece: number;
  start: number;
  scale: number;
  pitch: number;
}

/**
 * The best-voted places in `cells`, counting each cell's votes together with
 * its neighbours' in position and scale (a vote near a cell edge may land
 * either side), and skipping cells next to one already taken.
 */
function bestAlignments(count: number): Alignment[] {
  const around = (e: number): number[] => {
    const out: number[] = [];
    for (let dp = -1; dp <= 1; dp++) {
      for (let ds = -1; ds <= 1; ds++) {
        const n = cells.find(cells.piece[e], cells.position[e] + dp, cells.scale[e] + ds, cells.pitch[e]);
        if (n >= 0) out.push(n);
      }
    }
    return out;
  };
  const sum = (es: number[], of: Int32Array | Float64Array): number => es.reduce((t, n) => t + of[n], 0);
  // Neighbours' votes are summed for the best-voted cells only: a place worth verifying has many votes of its own.
  const own = mostCounted(cells.votes, cells.size, OWN_VOTES_RANKED * count);
  const { piece, position, scale, pitch } = cells;
  const ranked = own
    .map((e) => ({ e, votes: sum(around(e), cells.votes) }))
    .sort((x, y) => y.votes - x.votes || piece[x.e] - piece[y.e] || position[x.e] - position[y.e] || scale[x.e] - scale[y.e] || pitch[x.e] - pitch[y.e]);
  const taken: number[] = [];
  const out: Alignment[] = [];
  for (const { e } of ranked) {
    if (out.length >= count) break;
    if (taken.some((t) => piece[t] === piece[e] && pitch[t] === pitch[e] && Math.abs(position[t] - position[e]) <= 1 && Math.abs(scale[t] - scale[e]) <= 1)) continue;
    taken.push(e);
    const group = around(e);
    const votes = sum(group, cells.votes);
    out.push({ piece: piece[e], start: sum(group, cells.start) / votes, scale: Math.exp(sum(group, cells.logScale) / votes), pitch: pitch[e] });
  }
  return out;
}

/** The window rescaled to an alignment's time scale, verified near the estimated place; null when nothing there beats `incumbent`. */
function verifyAt(verify: Verifier, window: MatchWindow, spanGrains: number, a: Alignment, incumbent: WindowMatch | null): { match: WindowMatch; span: Span } | null {
  const span: Span = { points: scaleTime(window.points, window.startGrains, a.scale), startGrains: window.startGrains, spanGrains: Math.round(spanGrains / a.scale) };
  const m = verify.near(span, { piece: a.piece, shift: Math.round(window.startGrains - a.start), dp: a.pitch, within: NEAR_WITHIN }, incumbent);
  // Four decimals: finer than any tempo difference a player could mean.
  return m && m !== incumbent ? { match: { ...m, timeScale: Math.round(a.scale * 1e4) / 1e4 }, span } : null;
}

/**
 * The least-squares line from the matched corpus onsets to the played ones
 * (in the window's own time): its slope is the time scale, and it places the
 * window start in the corpus. Null with fewer than 3 pairs or a flat fit.
 */
function refit(flat: FlatPoints, tolGrains: number, found: { match: WindowMatch; span: Span }): Alignment | null {
  const { match, span } = found;
  const scale = match.timeScale!;
  const startGrains = span.startGrains;
  const from = Math.round(match.pieceStart * GRAINS_PER_BEAT);
  const shift = startGrains - from;
  const lines = excerptLines(flat, match.piece, from - tolGrains, from + span.spanGrains + tolGrains);
  const pairs = toleranceMatching(lines, span.points, { at: shift, pitch: match.transposition }, tolGrains);
  if (pairs.length < 3) return null;
  const xs = pairs.map((p) => p.corpus.at);
  const ys = pairs.map((p) => startGrains + (p.query.at - startGrains) * scale);
  const mx = xs.reduce((s, x) => s + x, 0) / xs.length;
  const my = ys.reduce((s, y) => s + y, 0) / ys.length;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < xs.length; i++) {
    sxy += (xs[i] - mx) * (ys[i] - my);
    sxx += (xs[i] - mx) ** 2;
  }
  if (sxx === 0) return null;
  const fitted = sxy / sxx;
  if (!(fitted > 0)) return null;
  return { piece: match.piece, start: mx - (my - startGrains) / fitted, scale: fitted, pitch: match.transposition };
}

/** Throws unless fingerprint settings are usable. */
export function checkFingerprintSettings(settings: FingerprintSettings): void {
  if (!(settings.minScale > 0 && settings.minScale <= 1 && settings.maxScale >= 1 && Number.isFinite(settings.maxScale))) {
    throw new RangeError(`time scales must satisfy 0 < minScale ≤ 1 ≤ maxScale, got ${settings.minScale}…${settings.maxScale}`);
  }
  if (!(Number.isInteger(settings.candidates) && settings.candidates >= 1)) throw new RangeError(`candidates must be a whole number ≥ 1, got ${settings.candidates}`);
  if (!(settings.maxPostings >= 1)) throw new RangeError(`maxPostings must be at least 1 (a key posted more often is not read), got ${settings.maxPostings}`);
  if (!(Number.isFinite(settings.tolerance) && settings.tolerance > 0 && settings.tolerance < 1)) throw new RangeError(`a tempo-free match needs a tolerance above 0 and under 1 beat, got ${settings.tolerance}`);
}

/**
 * The tempo-free candidate source: places voted by the stored fingerprint
 * table, each verified (by a verifier within a tolerance) at its estimated
 * time scale and again at the refitted one. Its matches carry `timeScale`.
 */
export function fingerprintCandidates(flat: FlatPoints, table: StoredFingerprints, options: Partial<FingerprintSettings> = {}): CandidateSource {
  const settings = { ...DEFAULT_FINGERPRINT, ...options };
  checkFingerprintSettings(settings);
  const inRange = (a: Alignment | null): a is Alignment => a !== null && a.scale >= settings.minScale && a.scale <= settings.maxScale;
  return {
    name: 'fingerprints',
    best(window, verify, spanGrains, incumbent = null) {
      if (window.points.length < 3) return null;
      const tolGrains = toGrains(verify.toleranceBeats);
      vote(flat, table, settings, window);
      let found: { match: WindowMatch; span: Span } | null = null;
      for (const a of bestAlignments(settings.candidates)) {
        const at = verifyAt(verify, window, spanGrains, a, found?.match ?? incumbent);
        if (at) found = at;
      }
      if (!found) return null;
      // The estimate's time scale, refitted over the notes it matched, for the best place only: the others scored less at theirs.
      const again = refit(flat, tolGrains, found);
      const refined = inRange(again) ? verifyAt(verify, window, spanGrains, again, null) : null;
      return refined && !betterMatch(found.match, refined.match) ? refined.match : found.match;
    },
  };
}
