/**
 * Recent stretches: how much of what was *just* played matches, so that a
 * quote is warned about while it is still short, not once it fills the
 * window.
 *
 * A trailing stretch of L beats is the window's points with onsets in
 * (newest − L, newest], compared from its first point to its last (the
 * corpus excerpt is cut to the same played extent, so a quote two beats old
 * is not charged for the corpus notes it has not reached yet). Each
 * stretch's best match is found among the translations the caller's
 * candidate source already proposes (core/live-match.ts: the streaming
 * index's votes), verified by the pipeline's verifier on the stretch alone,
 * so a stretch never scores above what the reference would give it.
 *
 * The rule (`hotStretch`): a stretch warns when it holds notes at
 * `minOnsets` different moments or more (a chord counts once: held chords at
 * a cadence are the idiom's commonest figure, however many notes they
 * hold), scores at least the threshold of its own length — or holds
 * nothing the corpus passage lacks and leaves out under `leftOut` of that
 * passage's notes (a player who drops a note of a quote still quotes it;
 * one who plays a different note has left the quote) — and
 * its matched material is distinctive enough (core/distinctiveness.ts). The
 * thresholds come from the corpus's human baseline at each length
 * (`stretchThresholds`): short figures are common, so a two-beat stretch
 * needs a score the corpus's own two-beat windows hardly ever reach
 * against the rest of it. Of several hot stretches the longest is named.
 *
 * @example
 *   const stretches = stretchMatches({ points, startGrains }, candidates, verify, [2, 4, 8]);
 *   // → [{ beats: 2, startGrains: 115200, endGrains: 122880, notes: 9, score: 1, piece: 4, ... }, ...]
 *   hotStretch(stretches, { lengths: [2, 4, 8], thresholds: [1, 0.8, 0.6], leftOut: 0.1, minOnsets: 6, minDistinctiveness: 0.5 }, (s) => 1)
 *   // → the 8-beat stretch when it scores ≥ 0.6, else the 4-beat one when ≥ 0.8, …, or null
 */
import { type Point, toGrains } from './note.js';
import type { MatchWindow, WindowMatch } from './match.js';
import { type Candidate, type Verifier } from './verify.js';
import { verifyAll } from './index-match.js';

/** One trailing stretch of a window and its best verified match. */
export interface StretchMatch {
  /** The stretch's nominal length, beats. */
  beats: number;
  /** Onset of its first and of its last point, grains. */
  startGrains: number;
  endGrains: number;
  /** Points in the stretch. */
  notes: number;
  /** Distinct onsets among them: a chord counts once. */
  onsets: number;
  /** Its best match among the candidates, or null when none matches a point. */
  match: WindowMatch | null;
  score: number;
}

export interface StretchRule {
  /** Trailing stretch lengths in beats, ascending. */
  lengths: readonly number[];
  /** The score each length must reach, in the order of `lengths`. */
  thresholds: readonly number[];
  /** A stretch every note of which matches warns below its threshold too, when it leaves out under this share of the corpus passage's notes (0: never). */
  leftOut: number;
  /** A stretch whose points lie at fewer distinct onsets than this never warns. */
  minOnsets: number;
  /** A stretch whose matched material is less distinctive than this never warns. */
  minDistinctiveness: number;
}

/** A window's trailing stretches: for each length, the points in (newest − L, newest]; a length that adds no point to a shorter one is skipped. */
export function trailingStretches(points: readonly Point[], lengths: readonly number[]): { beats: number; points: readonly Point[] }[] {
  if (points.length === 0) return [];
  const newest = points[points.length - 1].at;
  const out: { beats: number; points: readonly Point[] }[] = [];
  let first = points.length;
  for (const beats of lengths) {
    const from = newest - toGrains(beats);
    let i = first;
    while (i > 0 && points[i - 1].at > from) i--;
    if (i === first) continue;
    first = i;
    out.push({ beats, points: points.slice(i) });
  }
  return out;
}

/** Distinct onsets of points sorted by onset, without allocating: this runs for every stretch of every scoring pass. */
function onsetCount(points: readonly Point[]): number {
  let n = 0;
  for (let i = 0; i < points.length; i++) if (i === 0 || points[i].at !== points[i - 1].at) n++;
  return n;
}

/** The best match of each trailing stretch of `window` among `candidates`, verified on the stretch's own points and played extent. */
export function stretchMatches(window: MatchWindow, candidates: readonly Candidate[], verify: Verifier, lengths: readonly number[]): StretchMatch[] {
  return trailingStretches(window.points, lengths).map(({ beats, points }) => {
    const startGrains = points[0].at;
    const endGrains = points[points.length - 1].at;
    const best = candidates.length ? verifyAll({ points, startGrains, spanGrains: endGrains - startGrains + 1 }, candidates, verify) : null;
    const match = best && best.matched > 0 ? best : null;
    return { beats, startGrains, endGrains, notes: points.length, onsets: onsetCount(points), match, score: match?.score ?? 0 };
  });
}

/** The threshold of a stretch length under `rule` (the nearest length's at or below it; the shortest's below them all). */
export function thresholdOf(rule: Pick<StretchRule, 'lengths' | 'thresholds'>, beats: number): number {
  let t = rule.thresholds[0];
  rule.lengths.forEach((l, i) => {
    if (l <= beats) t = rule.thresholds[i];
  });
  return t;
}

/**
 * A quote with notes left out: every note of the stretch matches, and the
 * corpus passage's notes it lacks are under `leftOut` of them (strictly:
 * 1 of 11 is under a tenth, 1 of 10 is not).
 *
 * @example
 *   leavesOut({ notes: 10, match: { matched: 10, excerptNotes: 11, ... }, ... }, 0.1)   // → true
 */
export function leavesOut(s: Pick<StretchMatch, 'notes' | 'match'>, leftOut: number): boolean {
  const m = s.match;
  return m !== null && m.matched === s.notes && m.excerptNotes - m.matched < leftOut * m.excerptNotes;
}

/**
 * The stretch that warns: the longest one with points at `minOnsets` onsets whose
 * score reaches its length's threshold (or that only `leavesOut` notes of its
 * passage) and whose material is distinctive
 * enough (`distinctiveness` is asked only of stretches that pass the rest,
 * longest first), or null.
 */
export function hotStretch(stretches: readonly StretchMatch[], rule: StretchRule, distinctiveness: (s: StretchMatch) => number): { stretch: StretchMatch; distinctiveness: number } | null {
  for (const s of [...stretches].sort((a, b) => b.beats - a.beats)) {
    if (!s.match || s.onsets < rule.minOnsets || (s.score < thresholdOf(rule, s.beats) && !leavesOut(s, rule.leftOut))) continue;
    const d = distinctiveness(s);
    if (d >= rule.minDistinctiveness) return { stretch: s, distinctiveness: d };
  }
  return null;
}

/** The stretch to show when none warns: the one closest to (or furthest past) its threshold. */
export function nearestStretch(stretches: readonly StretchMatch[], rule: Pick<StretchRule, 'lengths' | 'thresholds'>): StretchMatch | null {
  let best: StretchMatch | null = null;
  for (const s of stretches) if (s.match && (!best || s.score - thresholdOf(rule, s.beats) > best.score - thresholdOf(rule, best.beats))) best = s;
  return best;
}

/**
 * Per-length thresholds from the human baseline's score at each length
 * (`baseline(L)`, or undefined when none is stored): the stored score plus
 * `margin`, or `fallback` where none is stored. A threshold above 1 means
 * that length never warns: the corpus's own stretches of it already match
 * whole.
 */
export function stretchThresholds(lengths: readonly number[], baseline: (beats: number) => number | undefined, options: { margin: number; fallback: number }): number[] {
  return lengths.map((l) => {
    const b = baseline(l);
    return b === undefined ? options.fallback : Math.round((b + options.margin) * 1000) / 1000;
  });
}
