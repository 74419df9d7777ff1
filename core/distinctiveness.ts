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
 * search (the baseline's own piece) is left out of the count too.
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

/** Distinct corpus places holding at least NEAR_SHARE of `material` (sorted, from the corpus). */
export function placesHolding(material: readonly Point[], corpus: CorpusPoints, exclude?: number): number {
  if (material.length === 0) return 0;
  const need = Math.max(1, Math.ceil(NEAR_SHARE * material.length));
  const apart = Math.max(GRAINS_PER_BEAT, material[material.length - 1].at - material[0].at);
  let places = 0;
  corpus.points.forEach((points, piece) => {
    if (piece === exclude) return;
    const shifts: number[] = [];
    for (const [k, count] of translationCounts(material, points)) if (count >= need) shifts.push(keyTranslation(k).at);
    shifts.sort((a, b) => a - b);
    let placeStart = -Infinity;
    for (const s of shifts) {
      if (s - placeStart >= apart) {
        places++;
        placeStart = s;
      }
    }
  });
  return places;
}

/** 1 / places, in (0, 1]; a match always holds its own place, so fewer than one counts as one. */
export const distinctivenessOf = (places: number): number => 1 / Math.max(1, places);

/**
 * Wraps a matcher so each match carries its distinctiveness. `toleranceBeats`
 * is the tolerance the wrapped matcher matched with, so the material found is
 * the material it counted.
 */
export function withDistinctiveness(matcher: WindowMatcher, corpus: CorpusPoints, toleranceBeats: number): WindowMatcher {
  checkTolerance(toleranceBeats);
  const tolGrains = toGrains(toleranceBeats);
  const lines = corpus.points.map(pitchLines);
  return {
    windowBeats: matcher.windowBeats,
    best(window, startGrains, options = {}) {
      const m = matcher.best(window, startGrains, options);
      if (!m || m.matched === 0) return m;
      const material = matchedMaterial(lines[m.piece], window, startGrains, m, tolGrains);
      return { ...m, distinctiveness: distinctivenessOf(placesHolding(material, corpus, options.exclude)) };
    },
  };
}
