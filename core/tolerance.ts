/**
 * Matching played timing: a corpus point counts as matched when, after the
 * translation, the window holds a point of the same pitch whose ontime lies
 * within ± tolerance of it. Matching is one-to-one — a played note stands for
 * at most one corpus note — so a smeared chord cannot count twice.
 *
 * For one translation the matching is a maximum bipartite matching, which
 * splits by pitch into matchings of points on a line where a pair is allowed
 * when the two lie within ± tolerance; two sorted lists matched greedily from
 * the left give the maximum. Candidate translations come from a histogram of
 * (time difference in bins of one tolerance, pitch difference) over all pairs.
 * Each bin is refined to shifts within one bin of it, the densest span of
 * its time differences; every pair such a shift can match lies in bins
 * b−2…b+2, so their sum bounds the bin's matching and lets the scan stop
 * early, as the exact search does. The pipeline's verifier (core/verify.ts)
 * runs this search on a whole piece (the reference) or near a candidate.
 *
 * @example
 *   toleranceMatching(pitchLines(corpusExcerpt), playedWindow, { at: 7680, pitch: 5 }, toGrains(0.1)).length
 *   // → 22   corpus notes matched one to one by played notes within ±0.1 beat
 */
import { type Point, GRAINS_PER_BEAT } from './note.js';
import { type FlatPoints, lowerBoundAt } from './triple-index.js';
import { type Translation, keyTranslation, translationKey } from './cardinality.js';
import { type WindowMatch, betterMatch } from './match.js';

/** A piece's ontimes grouped by pitch, each list ascending: the lines one-to-one matching runs along. */
export type PitchLines = Map<number, number[]>;

/** What a search reads of a corpus excerpt's pitch lines: one pitch's line at a time (a `PitchLines`, or lines refilled in place). */
export type LineLookup = Pick<PitchLines, 'get'>;

export function pitchLines(points: readonly Point[]): PitchLines {
  const lines: PitchLines = new Map();
  for (const p of points) {
    const line = lines.get(p.pitch);
    if (line) line.push(p.at);
    else lines.set(p.pitch, [p.at]);
  }
  return lines;
}

/** Index of the first value ≥ x in an ascending list. */
export function firstAtLeast(xs: readonly number[], x: number): number {
  let lo = 0;
  let hi = xs.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (xs[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** A corpus point and the window point it was matched to. */
export interface MatchedPair {
  corpus: Point;
  query: Point;
}

/**
 * The maximum one-to-one matching of corpus points, moved by `t`, onto window
 * points of equal pitch lying within ± `tolGrains` of them. A caller trying
 * many translations passes the window's pitch lines, made once.
 */
export function toleranceMatching(lines: LineLookup, window: readonly Point[], t: Translation, tolGrains: number, windowLines: PitchLines = pitchLines(window)): MatchedPair[] {
  const pairs: MatchedPair[] = [];
  matchAlongLines(lines, windowLines, t, tolGrains, (corpusAt, queryAt, pitch) => pairs.push({ corpus: { at: corpusAt, pitch: pitch - t.pitch }, query: { at: queryAt, pitch } }));
  return pairs;
}

/** How many pairs `toleranceMatching` finds, without making them: what a search trying many translations needs. */
export const toleranceCount = (lines: LineLookup, windowLines: PitchLines, t: Translation, tolGrains: number): number => matchAlongLines(lines, windowLines, t, tolGrains);

/** Walks each pitch line of the window against the corpus's, greedily from the left; returns the pairs' count, telling `pair` of each. */
function matchAlongLines(lines: LineLookup, windowLines: PitchLines, t: Translation, tolGrains: number, pair?: (corpusAt: number, queryAt: number, pitch: number) => void): number {
  let n = 0;
  // forEach, not for…of: an entry array per pitch line, per translation tried, is garbage a live note waits for.
  windowLines.forEach((played, pitch) => {
    const line = lines.get(pitch - t.pitch);
    if (!line) return;
    let i = firstAtLeast(line, played[0] - t.at - tolGrains);
    let j = 0;
    while (i < line.length && j < played.length) {
      const at = line[i] + t.at;
      if (at + tolGrains < played[j]) i++;
      else if (played[j] + tolGrains < at) j++;
      else {
        pair?.(line[i], played[j], pitch);
        n++;
        i++;
        j++;
      }
    }
  });
  return n;
}

/** Restricts the candidate search to one transposition and time shifts near a guess. */
export interface Near {
  translation: Translation;
  /** Largest distance in grains from the guessed time shift. */
  within: number;
}

/**
 * Scratch for the time differences a search collects, kept between searches
 * and grown as needed: a live note runs hundreds of searches, and an array
 * each is garbage that note's successor waits for.
 */
let shiftScratch = new Float64Array(1024);

/** Time differences (window − corpus) of all pairs with pitch difference `pitch` and time difference in [lo, hi], ascending: a view of the scratch, good until the next search. */
function shiftsBetween(lines: LineLookup, window: readonly Point[], pitch: number, lo: number, hi: number): Float64Array {
  let n = 0;
  for (const q of window) {
    const line = lines.get(q.pitch - pitch);
    if (!line) continue;
    for (let i = firstAtLeast(line, q.at - hi); i < line.length && q.at - line[i] >= lo; i++) {
      if (n === shiftScratch.length) {
        const grown = new Float64Array(2 * n);
        grown.set(shiftScratch);
        shiftScratch = grown;
      }
      shiftScratch[n++] = q.at - line[i];
    }
  }
  // A typed sort is numeric and in place.
  return shiftScratch.subarray(0, n).sort();
}

/** Pair counts by time-difference bin, over the bins a search near a guess can reach: counts[b − first]. */
let binScratch = new Int32Array(64);

/** Histogram of pairs by (time-difference bin, pitch difference), keyed like translations, over the whole piece. */
function pieceBinCounts(s: PieceSearch, bin: number): Map<number, number> {
  const counts = new Map<number, number>();
  const { at, pitch, offsets } = s.flat;
  for (const q of s.window) {
    for (let c = offsets[s.piece]; c < offsets[s.piece + 1]; c++) {
      const k = translationKey(Math.floor((q.at - at[c]) / bin), q.pitch - pitch[c]);
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
  }
  return counts;
}

/** A bin worth refining: its translation key (bin, pitch difference), and at most how many pairs it can match. */
interface RankedBin {
  k: number;
  bound: number;
}

/**
 * The bins of a search with their bounds, best bound first (ties: lower key
 * first). A bin's shifts match only pairs within two bins of it, so the sum
 * of those bins' counts (at most the window's size) bounds its matching.
 * Near a guess the transposition is fixed and the bins few: they are
 * counted in a typed array instead of a map.
 */
function rankedBins(s: PieceSearch, bin: number): RankedBin[] {
  const ranked: RankedBin[] = [];
  if (s.near) {
    const { at, pitch } = s.near.translation;
    const first = Math.floor((at - s.near.within) / bin) - 2;
    const size = Math.floor((at + s.near.within) / bin) + 3 - first;
    if (binScratch.length < size) binScratch = new Int32Array(2 ** Math.ceil(Math.log2(size)));
    const counts = binScratch.fill(0, 0, size);
    const shifts = shiftsBetween(s.lines, s.window, pitch, at - s.near.within, at + s.near.within);
    for (let i = 0; i < shifts.length; i++) counts[Math.floor(shifts[i] / bin) - first]++;
    for (let b = 2; b < size - 2; b++) {
      if (counts[b] === 0) continue;
      const around = counts[b - 2] + counts[b - 1] + counts[b] + counts[b + 1] + counts[b + 2];
      ranked.push({ k: translationKey(b + first, pitch), bound: Math.min(around, s.window.length) });
    }
  } else {
    const counts = pieceBinCounts(s, bin);
    counts.forEach((_, k) => {
      const { at, pitch } = keyTranslation(k);
      let around = 0;
      for (let d = -2; d <= 2; d++) around += counts.get(translationKey(at + d, pitch)) ?? 0;
      ranked.push({ k, bound: Math.min(around, s.window.length) });
    });
  }
  return ranked.sort((x, y) => y.bound - x.bound || x.k - y.k);
}

/**
 * The time shifts worth matching at for one bin: the median of the densest
 * span of 2 × tolerance among the shifts the bin can reach (the played notes
 * scatter around the true shift), and the bin's most frequent exact shift, so
 * a copy with strict timing scores at least as well as on the exact path.
 */
function refinedShifts(lines: LineLookup, window: readonly Point[], b: number, pitch: number, bin: number, tolGrains: number): number[] {
  const shifts = shiftsBetween(lines, window, pitch, (b - 1) * bin, (b + 2) * bin - 1);
  let from = 0;
  let to = 0;
  for (let lo = 0, hi = 0; hi < shifts.length; hi++) {
    while (shifts[hi] - shifts[lo] > 2 * tolGrains) lo++;
    if (hi - lo > to - from) {
      from = lo;
      to = hi;
    }
  }
  const median = shifts[(from + to) >> 1];
  let mode = median;
  let most = 0;
  for (let i = 0; i < shifts.length; ) {
    let j = i;
    while (j < shifts.length && shifts[j] === shifts[i]) j++;
    const inBin = Math.floor(shifts[i] / bin) === b;
    if (inBin && j - i > most) {
      mode = shifts[i];
      most = j - i;
    }
    i = j;
  }
  return mode === median ? [median] : [median, mode];
}

export interface PieceSearch {
  /** The corpus's points, and the piece searched. */
  flat: FlatPoints;
  piece: number;
  /** The piece's pitch lines, over at least the corpus span any shift searched can reach. */
  lines: LineLookup;
  /** Window points, sorted, on the corpus's time scale. */
  window: readonly Point[];
  /** Their pitch lines, when the caller has made them once for many searches. */
  windowLines?: PitchLines;
  startGrains: number;
  /** Length in grains of the corpus span the window covers. */
  spanGrains: number;
  tolGrains: number;
  near?: Near;
}

/** The best tolerant match of a window in one piece, or `incumbent` when nothing there beats it. */
export function bestInPiece(s: PieceSearch, incumbent: WindowMatch | null): WindowMatch | null {
  s.flat.ensure?.(s.piece);
  const bin = Math.max(1, s.tolGrains);
  const { at: onsets, offsets } = s.flat;
  const windowLines = s.windowLines ?? pitchLines(s.window);
  let best = incumbent;
  for (const { k, bound: most } of rankedBins(s, bin)) {
    if (best && most / s.window.length < best.score) break;
    const { at: b, pitch } = keyTranslation(k);
    for (const shift of refinedShifts(s.lines, s.window, b, pitch, bin, s.tolGrains)) {
      const matched = toleranceCount(s.lines, windowLines, { at: shift, pitch }, s.tolGrains);
      const from = s.startGrains - shift;
      const lo = lowerBoundAt(onsets, from, offsets[s.piece], offsets[s.piece + 1]);
      const excerptNotes = lowerBoundAt(onsets, from + s.spanGrains, lo, offsets[s.piece + 1]) - lo;
      const score = matched / Math.max(s.window.length, excerptNotes);
      // Only a score at least the best's can be better (betterMatch): most shifts tried are not made into a match.
      if (best && score < best.score) continue;
      const candidate: WindowMatch = { piece: s.piece, pieceStart: from / GRAINS_PER_BEAT, transposition: pitch, matched, excerptNotes, score };
      if (betterMatch(candidate, best)) best = candidate;
    }
  }
  return best;
}

/** Throws unless `beats` is a usable tolerance: finite, ≥ 0, under a beat. */
export function checkTolerance(beats: number): void {
  if (!(Number.isFinite(beats) && beats >= 0 && beats < 1)) throw new RangeError(`tolerance must be at least 0 and under 1 beat, got ${beats}`);
}
