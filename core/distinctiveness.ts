/**
 * How common the matched material is across the corpus: the last stage of
 * the matching pipeline (core/pipeline.ts), after any candidate source.
 *
 * Definition: take the corpus notes a window's best match lands on — the
 * borrowed material as the corpus writes it, free of played timing and tempo.
 * Count the distinct corpus pieces that hold at least 80% of that material
 * under one translation in time and pitch (the source piece among them). A
 * piece's own repeats are one source; three versions of a tune in the corpus
 * are three. distinctiveness = 1 / pieces: 1 when the material is found in
 * one piece only, ½ in two, and near 0 for a scale run or a cadence formula
 * that the whole corpus uses. A piece left out of the search (the
 * baseline's own piece) is left out of the count too. Material of fewer
 * than three notes is no figure at all and gets 0: a pair of notes a given
 * interval and time apart is found all over any corpus.
 *
 * @example
 *   const m = withDistinctiveness(matcher, { flat, tolerance: 0 });
 *   m.best({ points: window, startGrains: 0 })
 *   // → { piece: 3, ..., score: 0.5, distinctiveness: 0.0625 }   (a run found in 16 pieces)
 */
import { type Point, comparePoints, toGrains } from './note.js';
import { translationKey } from './cardinality.js';
import type { MatchWindow, WindowMatch, WindowMatcher } from './match.js';
import { checkTolerance, toleranceMatching } from './tolerance.js';
import { scaleTime } from './fingerprint.js';
import { type CorpusIndex, type FlatPoints, lowerBoundAt } from './triple-index.js';
import { TripleLookups, voteRarest } from './index-match.js';
import { excerptLines } from './verify.js';
import { VoteTable } from './votes.js';

/** Share of the matched material a place must hold to count as holding it. */
export const NEAR_SHARE = 0.8;

/** The corpus points a match lands on, one-to-one, with ontimes allowed ± `tolGrains` (0 = exactly). */
export function matchedMaterial(flat: FlatPoints, window: MatchWindow, spanGrains: number, m: WindowMatch, tolGrains: number): Point[] {
  const scale = m.timeScale ?? 1;
  const onCorpusTime = scale === 1 ? window.points : scaleTime(window.points, window.startGrains, scale);
  const from = toGrains(m.pieceStart);
  const lines = excerptLines(flat, m.piece, from - tolGrains, from + Math.round(spanGrains / scale) + tolGrains);
  return toleranceMatching(lines, onCorpusTime, { at: window.startGrains - from, pitch: m.transposition }, tolGrains)
    .map((p) => p.corpus)
    .sort(comparePoints);
}

/** How many of `material`'s points a piece must hold under one translation to hold it. */
const needOf = (material: readonly Point[]): number => Math.max(1, Math.ceil(NEAR_SHARE * material.length));

/** Whether a piece holds at least `need` points of `material` under one translation. */
function pieceHolds(flat: FlatPoints, piece: number, material: readonly Point[], need: number): boolean {
  flat.ensure?.(piece);
  const { at, pitch, offsets } = flat;
  const counts = new Map<number, number>();
  for (let c = offsets[piece]; c < offsets[piece + 1]; c++) {
    for (const q of material) {
      const k = translationKey(at[c] - q.at, pitch[c] - q.pitch);
      const n = (counts.get(k) ?? 0) + 1;
      if (n >= need) return true;
      counts.set(k, n);
    }
  }
  return false;
}

/**
 * Whether a piece holds at least `need` of `material`'s points (sorted) at one
 * translation, `shift` grains and `dp` steps from the piece to the material:
 * one merge, stopped as soon as the answer is known.
 */
export function holdsAt(flat: FlatPoints, material: readonly Point[], at: { piece: number; shift: number; dp: number }, need: number): boolean {
  const { piece, shift, dp } = at;
  flat.ensure?.(piece);
  const end = flat.offsets[piece + 1];
  let c = lowerBoundAt(flat.at, material[0].at - shift, flat.offsets[piece], end);
  let matched = 0;
  let missed = 0;
  for (const w of material) {
    const t = w.at - shift;
    const p = w.pitch - dp;
    while (c < end && (flat.at[c] < t || (flat.at[c] === t && flat.pitch[c] < p))) c++;
    if (c < end && flat.at[c] === t && flat.pitch[c] === p) {
      if (++matched >= need) return true;
    } else if (++missed > material.length - need) return false;
  }
  return false;
}

/** Distinct corpus pieces holding at least NEAR_SHARE of `material` (sorted, from the corpus): the reference count. */
export function piecesHolding(material: readonly Point[], flat: FlatPoints, exclude?: number): number {
  if (material.length === 0) return 0;
  const need = needOf(material);
  let pieces = 0;
  for (let p = 0; p < flat.offsets.length - 1; p++) if (p !== exclude && pieceHolds(flat, p, material, need)) pieces++;
  return pieces;
}

/** Postings the indexed count reads at most (its rarest triples first), and candidate places it verifies. */
export const PLACES_FILTER = { voteBudget: 1_000, minTriples: 3, candidates: 64 };

/** One vote table and one set of lookup buffers for every count: fresh ones would grow to the same size each time. */
const placeVotes = new VoteTable(14);
const placeLookups = new TripleLookups();

/**
 * `piecesHolding` through the corpus index, at a cost independent of the
 * corpus's size. Candidate places come from the triples of the material as a
 * run of its own (these include every triple the source piece stores among
 * the material's notes: a corpus triple spans at most `partners` steps, and
 * the material, a subset of the piece's notes, takes no more steps between
 * the same notes); their postings vote for translations (rarest first,
 * PLACES_FILTER's budget), and the most-voted are verified
 * point by point, as is the source place itself. Every piece counted holds
 * the material, so this never counts more pieces than `piecesHolding`; it
 * counts fewer when a piece holds the material among other notes that no
 * shared triple survives (then the material reads more distinctive than it is).
 * A shard that does not hold the source piece (core/shards.ts) passes `source` undefined.
 */
export function indexedPiecesHolding(index: CorpusIndex, source: number | undefined, material: readonly Point[], exclude?: number): number {
  if (material.length === 0) return 0;
  const need = needOf(material);
  const { partners } = index.shape;
  const horizon = toGrains(index.shape.horizonBeats);
  const lookups = placeLookups;
  lookups.clear();
  const materialAt = material.map((p) => p.at);
  for (let c = 2; c < material.length; c++) lookups.collect(index, material, materialAt, 0, c, partners, horizon);
  const votes = placeVotes;
  votes.clear();
  lookups.sort();
  voteRarest(index, votes, lookups, material, { next: 0, spent: 0 }, PLACES_FILTER.voteBudget, PLACES_FILTER.minTriples, exclude ?? -1);
  const holding = new Set<number>();
  const hold = (piece: number, shift: number, dp: number): void => {
    if (!holding.has(piece) && holdsAt(index.points, material, { piece, shift, dp }, need)) holding.add(piece);
  };
  if (source !== undefined && source !== exclude) hold(source, 0, 0);
  for (const e of votes.top(PLACES_FILTER.candidates)) hold(votes.pieceAt(e), votes.shiftAt(e), votes.dpAt(e));
  return holding.size;
}

/** 1 / pieces, in (0, 1]; a match always holds its own piece, so fewer than one counts as one. */
export const distinctivenessOf = (pieces: number): number => 1 / Math.max(1, pieces);

/** Material of fewer notes than this is no figure: two notes a given interval and time apart are everywhere. */
export const MIN_FIGURE_NOTES = 3;

/** The distinctiveness of matched material: 0 below MIN_FIGURE_NOTES, else 1 / the pieces `count` finds. */
export const figureDistinctiveness = (material: readonly Point[], count: (material: readonly Point[]) => number): number =>
  material.length < MIN_FIGURE_NOTES ? 0 : distinctivenessOf(count(material));

/** How a distinctiveness stage counts pieces: by brute force over the flat points, or through the corpus index (same pitch dimension). */
export interface PieceCount {
  flat: FlatPoints;
  index?: CorpusIndex;
  /** The tolerance the wrapped matcher matched with, so the material found is the material it scored. */
  tolerance: number;
}

/** The distinctiveness of one match of a window. */
export function matchDistinctiveness(count: PieceCount, window: MatchWindow, spanGrains: number, m: WindowMatch): number {
  const material = matchedMaterial(count.flat, window, spanGrains, m, toGrains(count.tolerance));
  const { index } = count;
  return figureDistinctiveness(material, index ? (x) => indexedPiecesHolding(index, m.piece, x, window.exclude) : (x) => piecesHolding(x, count.flat, window.exclude));
}

/** Wraps a matcher so each match carries its distinctiveness. */
export function withDistinctiveness(matcher: WindowMatcher, count: PieceCount): WindowMatcher {
  checkTolerance(count.tolerance);
  const spanGrains = toGrains(matcher.windowBeats);
  return {
    windowBeats: matcher.windowBeats,
    best(window) {
      const m = matcher.best(window);
      if (!m || m.matched === 0) return m;
      return { ...m, distinctiveness: matchDistinctiveness(count, window, spanGrains, m) };
    },
  };
}
