/**
 * How common the matched material is across the corpus.
 *
 * Definition: take the corpus notes a window's best match lands on — the
 * borrowed material as the corpus writes it, free of played timing and tempo.
 * Count the distinct corpus places that hold at least 80% of that material
 * under one translation in time and pitch (the source place among them).
 * Within a piece, places closer together than the material's own length (at
 * least one beat) are one place, so a figure that overlaps itself shifted by
 * a step is not counted twice. distinctiveness = 1 / places: 1 when the
 * material is found in one place only, ½ in two, and near 0 for a scale run
 * or a cadence formula that the whole corpus uses. A piece left out of the
 * search (the baseline's own piece) is left out of the count too. Material
 * of fewer than three notes is no figure at all and gets 0: a pair of notes
 * a given interval and time apart is found all over any corpus.
 *
 * @example
 *   const m = withDistinctiveness(exactMatcher(view, 16), view, 0);
 *   m.best(window, 0)
 *   // → { piece: 3, ..., score: 0.5, distinctiveness: 0.0625 }   (a run found in 16 places)
 */
import { type Point, GRAINS_PER_BEAT, comparePoints, toGrains } from './note.js';
import { keyTranslation, translationCounts } from './cardinality.js';
import type { CorpusPoints } from './corpus.js';
import type { WindowMatch, WindowMatcher } from './match.js';
import { type PitchLines, checkTolerance, pitchLines, toleranceMatching } from './tolerance.js';
import { scaleTime } from './fingerprint.js';
import { type CorpusIndex, lowerBoundAt, triplesEndingAt } from './triple-index.js';
import { TripleLookups, keyOf, verifyShift, voteRarest } from './index-match.js';
import { VoteTable } from './votes.js';

/** Share of the matched material a place must hold to count as holding it. */
export const NEAR_SHARE = 0.8;

/** The corpus points a match lands on, one-to-one, with ontimes allowed ± `tolGrains` (0 = exactly). */
export function matchedMaterial(lines: PitchLines, window: readonly Point[], startGrains: number, m: WindowMatch, tolGrains: number): Point[] {
  const scale = m.timeScale ?? 1;
  const onCorpusTime = scale === 1 ? window : scaleTime(window, startGrains, scale);
  const shift = startGrains - toGrains(m.pieceStart);
  return toleranceMatching(lines, onCorpusTime, { at: shift, pitch: m.transposition }, tolGrains)
    .map((p) => p.corpus)
    .sort(comparePoints);
}

/** What holding `material` takes: `need` of its points, and places `apart` grains from each other within a piece. */
function placeRule(material: readonly Point[]): { need: number; apart: number } {
  return { need: Math.max(1, Math.ceil(NEAR_SHARE * material.length)), apart: Math.max(GRAINS_PER_BEAT, material[material.length - 1].at - material[0].at) };
}

/** Distinct corpus places holding at least NEAR_SHARE of `material` (sorted, from the corpus). */
export function placesHolding(material: readonly Point[], corpus: CorpusPoints, exclude?: number): number {
  if (material.length === 0) return 0;
  const { need, apart } = placeRule(material);
  const shifts = new Map<number, number[]>();
  corpus.points.forEach((points, piece) => {
    if (piece === exclude) return;
    const held: number[] = [];
    for (const [k, count] of translationCounts(material, points)) if (count >= need) held.push(keyTranslation(k).at);
    shifts.set(piece, held);
  });
  return countPlaces(shifts, apart);
}

/** Clusters each piece's sorted shifts: shifts closer than `apart` are one place. */
function countPlaces(shiftsByPiece: Map<number, number[]>, apart: number): number {
  let places = 0;
  for (const shifts of shiftsByPiece.values()) {
    shifts.sort((a, b) => a - b);
    let placeStart = -Infinity;
    for (const s of shifts) {
      if (s - placeStart >= apart) {
        places++;
        placeStart = s;
      }
    }
  }
  return places;
}

/** Postings the indexed count reads at most (its rarest triples first), and candidate places it verifies. */
export const PLACES_FILTER = { voteBudget: 2_000, minTriples: 6, candidates: 64 };

/** One vote table and one set of lookup buffers for every count: fresh ones would grow to the same size each time. */
const placeVotes = new VoteTable(14);
const placeLookups = new TripleLookups();

/**
 * `placesHolding` through the corpus index, at a cost independent of the
 * corpus's size. Candidate places come from triples of the material: those
 * of the material as a run of its own, and the source piece's own triples
 * whose three points all belong to it; their postings vote for translations
 * (rarest first, PLACES_FILTER's budget), and the most-voted are verified
 * point by point, as is the source place itself. Every place counted is
 * real, so this never counts more places than `placesHolding`; it counts
 * fewer when a place holds the material among other notes that no shared
 * triple survives (then the material reads more distinctive than it is).
 */
export function indexedPlacesHolding(index: CorpusIndex, source: number, material: readonly Point[], exclude?: number): number {
  if (material.length === 0) return 0;
  const { need, apart } = placeRule(material);
  const { partners } = index.shape;
  const horizon = toGrains(index.shape.horizonBeats);
  const lookups = placeLookups;
  lookups.clear();
  const materialAt = material.map((p) => p.at);
  for (let c = 2; c < material.length; c++) lookups.collect(index, material, materialAt, 0, c, partners, horizon);
  // The source piece's triples among the material: the material's own positions, or -1 for the notes around it.
  const { at, pitch, offsets } = index.points;
  const from = lowerBoundAt(at, material[0].at, offsets[source], offsets[source + 1]);
  const to = lowerBoundAt(at, material[material.length - 1].at + 1, from, offsets[source + 1]);
  const around: Point[] = [];
  const position: number[] = [];
  for (let i = from, m = 0; i < to; i++) {
    while (m < material.length && comparePoints(material[m], { at: at[i], pitch: pitch[i] }) < 0) m++;
    const own = m < material.length && material[m].at === at[i] && material[m].pitch === pitch[i];
    around.push({ at: at[i], pitch: pitch[i] });
    position.push(own ? m : -1);
  }
  const aroundAt = around.map((p) => p.at);
  for (let c = 2; c < around.length; c++) {
    if (position[c] < 0) continue;
    triplesEndingAt(aroundAt, 0, c, partners, horizon, (a, b) => {
      if (position[a] >= 0 && position[b] >= 0) lookups.keep(index, keyOf(around, a, b, c), position[a]);
    });
  }
  const votes = placeVotes;
  votes.clear();
  lookups.sort();
  const skipFrom = exclude === undefined ? 0 : offsets[exclude];
  const skipTo = exclude === undefined ? 0 : offsets[exclude + 1];
  voteRarest(index, votes, lookups, material, { next: 0, spent: 0 }, PLACES_FILTER.voteBudget, PLACES_FILTER.minTriples, skipFrom, skipTo);
  const shifts = new Map<number, number[]>();
  const span = material[material.length - 1].at - material[0].at + 1;
  const hold = (piece: number, shift: number, dp: number): void => {
    if (verifyShift(index, material, material[0].at, span, piece, shift, dp).matched >= need) (shifts.get(piece) ?? shifts.set(piece, []).get(piece)!).push(shift);
  };
  if (source !== exclude) hold(source, 0, 0);
  for (const e of votes.top(PLACES_FILTER.candidates)) {
    const piece = votes.pieceAt(e);
    const shift = votes.shiftAt(e);
    if (!(piece === source && shift === 0 && votes.dpAt(e) === 0)) hold(piece, shift, votes.dpAt(e));
  }
  return countPlaces(shifts, apart);
}

/** 1 / places, in (0, 1]; a match always holds its own place, so fewer than one counts as one. */
export const distinctivenessOf = (places: number): number => 1 / Math.max(1, places);

/** Material of fewer notes than this is no figure: two notes a given interval and time apart are everywhere. */
export const MIN_FIGURE_NOTES = 3;

/** The distinctiveness of matched material: 0 below MIN_FIGURE_NOTES, else 1 / the places `count` finds. */
export const figureDistinctiveness = (material: readonly Point[], count: (material: readonly Point[]) => number): number =>
  material.length < MIN_FIGURE_NOTES ? 0 : distinctivenessOf(count(material));

/** Each piece's pitch lines, made the first time a match lands in it: most pieces never need them. */
export function lazyPitchLines(points: (piece: number) => readonly Point[]): (piece: number) => PitchLines {
  const made = new Map<number, PitchLines>();
  return (piece) => made.get(piece) ?? made.set(piece, pitchLines(points(piece))).get(piece)!;
}

/**
 * Wraps a matcher so each match carries its distinctiveness. `toleranceBeats`
 * is the tolerance the wrapped matcher matched with, so the material found is
 * the material it counted. With the corpus `index` (same pitch dimension),
 * places are counted through it (`indexedPlacesHolding`), else by brute force.
 */
export function withDistinctiveness(matcher: WindowMatcher, corpus: CorpusPoints, toleranceBeats: number, index?: CorpusIndex): WindowMatcher {
  checkTolerance(toleranceBeats);
  const tolGrains = toGrains(toleranceBeats);
  const lines = lazyPitchLines((piece) => corpus.points[piece]);
  return {
    windowBeats: matcher.windowBeats,
    best(window, startGrains, options = {}) {
      const m = matcher.best(window, startGrains, options);
      if (!m || m.matched === 0) return m;
      const material = matchedMaterial(lines(m.piece), window, startGrains, m, tolGrains);
      const count = index ? (x: readonly Point[]) => indexedPlacesHolding(index, m.piece, x, options.exclude) : (x: readonly Point[]) => placesHolding(x, corpus, options.exclude);
      return { ...m, distinctiveness: figureDistinctiveness(material, count) };
    },
  };
}
