/**
 * Recent stretches (core/stretch.ts) on hand-made windows: a quote that
 * began a few beats ago scores whole in the stretch that holds it, however
 * little of the window it fills yet; each length answers to its own
 * threshold; few notes (a chord counting once) and common material never warn; and a stretch never
 * scores above the exact reference on its own points. Pieces and playing
 * are invented here.
 */
import { describe, expect, it } from 'vitest';
import { type Point, toGrains } from '../../core/note.js';
import { flattenPoints } from '../../core/triple-index.js';
import { verifier } from '../../core/verify.js';
import { everyCandidates } from '../../core/pipeline.js';
import { type StretchMatch, type StretchRule, hotStretch, leavesOut, nearestStretch, stretchMatches, stretchThresholds, thresholdOf, trailingStretches } from '../../core/stretch.js';
import { pts, shift } from '../helpers/points.js';

/** An invented tune: a rising and falling line in eighths and quarters over 8 beats. */
const tune = pts([0, 60], [0.5, 62], [1, 64], [1.5, 67], [2, 65], [3, 64], [3.5, 62], [4, 60], [4.5, 59], [5, 60], [6, 67], [6.5, 69], [7, 71]);
/** Another, unrelated: wide leaps on the off-beats. */
const other = pts([0.25, 50], [1.25, 57], [2.25, 52], [3.25, 59], [4.25, 54], [5.25, 61], [6.25, 56], [7.25, 63]);
const flat = flattenPoints({ mode: 'chromatic', points: [tune, other], pieces: [] });
const exact = verifier(flat, 0);

/** Twelve beats of the performer's own wandering line, then the tune's first `beats` beats from beat 12, up a fourth. */
function quoted(beats: number): Point[] {
  const own = pts(...Array.from({ length: 24 }, (_, i): [number, number] => [i / 2, 40 + ((i * 7) % 11)]));
  return [...own, ...shift(tune.filter((p) => p.at < toGrains(beats)), 12, 5)];
}

/** The translation taking the tune onto its quote: the candidate a vote would propose. */
const quoteCandidate = { piece: 0, shift: toGrains(12), dp: 5, within: 0 };
const window = (points: Point[]) => ({ points, startGrains: points[0].at });
const rule = (over: Partial<StretchRule> = {}): StretchRule => ({ lengths: [2, 4, 8, 16], thresholds: [1.01, 0.9, 0.8, 0.6], leftOut: 0, minOnsets: 4, minDistinctiveness: 0.5, ...over });

describe('trailing stretches', () => {
  it('hold the points of the last L beats, newest included, and skip a length that adds none', () => {
    const w = pts([0, 60], [5, 62], [6, 64], [7, 65]);
    expect(trailingStretches(w, [1, 2, 3, 4, 8]).map((s) => [s.beats, s.points.length])).toEqual([[1, 1], [2, 2], [3, 3], [8, 4]]);
  });
});

describe('stretch matches', () => {
  it('a quote 4 beats old scores whole in the 4-beat stretch, though it fills a quarter of the 16-beat window', () => {
    const w = quoted(4);
    const [s2, s4, s8, s16] = stretchMatches(window(w), [quoteCandidate], exact, [2, 4, 8, 16]);
    expect([s2.beats, s4.beats, s8.beats, s16.beats]).toEqual([2, 4, 8, 16]);
    expect(s4.score).toBe(1);
    expect(s4.notes).toBe(7);
    expect(s4.startGrains).toBe(toGrains(12));
    expect(s4.match).toMatchObject({ piece: 0, pieceStart: 0, transposition: 5, matched: 7 });
    // The longer stretches hold the performer's own notes too, and score less.
    expect(s8.score).toBeLessThan(0.6);
    expect(s16.score).toBeLessThan(s8.score);
  });

  it('is scored against the corpus only as far as it has been played: the tune\'s later notes do not count against it', () => {
    const [s2] = stretchMatches(window(quoted(2)), [quoteCandidate], exact, [2]);
    expect(s2.score).toBe(1);
    expect(s2.match!.excerptNotes).toBe(4);
  });

  it('never scores a stretch above the exact reference on its own points', () => {
    for (const beats of [2, 3, 4, 6, 8]) {
      const w = quoted(beats);
      for (const s of stretchMatches(window(w), [quoteCandidate, { piece: 1, shift: toGrains(4), dp: 3, within: 0 }], exact, [2, 4, 8, 16])) {
        const points = w.filter((p) => p.at >= s.startGrains);
        const reference = everyCandidates(flat).best({ points, startGrains: s.startGrains }, exact, s.endGrains - s.startGrains + 1);
        expect(s.score).toBeLessThanOrEqual(reference!.score);
      }
    }
  });

  it('with no candidate, matches nothing', () => {
    expect(stretchMatches(window(quoted(4)), [], exact, [4]).map((s) => s.match)).toEqual([null]);
  });
});

describe('the rule: which stretch warns', () => {
  const distinct = () => 1;

  it('names the longest stretch that reaches its own length\'s threshold', () => {
    const stretches = stretchMatches(window(quoted(8)), [quoteCandidate], exact, [2, 4, 8, 16]);
    const hot = hotStretch(stretches, rule(), distinct);
    // The 8-beat stretch holds the 13 notes of the quote and the performer's last one.
    expect(hot?.stretch.beats).toBe(8);
    expect(hot?.stretch.score).toBeCloseTo(13 / 14, 9);
    expect(hotStretch(stretches, rule({ thresholds: [1.01, 0.9, 0.95, 0.6] }), distinct)?.stretch.beats).toBe(4);
  });

  it('a short stretch whose length never warns (threshold above 1) does not, however well it matches', () => {
    const stretches = stretchMatches(window(quoted(2)), [quoteCandidate], exact, [2, 4, 8, 16]);
    expect(stretches[0].score).toBe(1);
    expect(hotStretch(stretches, rule(), distinct)).toBeNull();
    expect(hotStretch(stretches, rule({ thresholds: [1, 0.9, 0.8, 0.6] }), distinct)?.stretch.beats).toBe(2);
  });

  it('a stretch whose notes start at fewer than minOnsets moments never warns', () => {
    const stretches = stretchMatches(window(quoted(4)), [quoteCandidate], exact, [2, 4, 8, 16]);
    expect(stretches[1].onsets).toBe(7);
    expect(hotStretch(stretches, rule({ minOnsets: 7 }), distinct)?.stretch.beats).toBe(4);
    expect(hotStretch(stretches, rule({ minOnsets: 8 }), distinct)).toBeNull();
  });

  it('a chord counts once: three held four-note chords matched whole are 12 notes at 3 onsets', () => {
    // An invented cadence: three chords of a half note, a half note and a whole note.
    const cadence = pts([0, 48], [0, 55], [0, 64], [0, 72], [2, 43], [2, 55], [2, 62], [2, 71], [4, 48], [4, 55], [4, 64], [4, 72]);
    const verify = verifier(flattenPoints({ mode: 'chromatic', points: [cadence], pieces: [] }), 0);
    const own = pts(...Array.from({ length: 8 }, (_, i): [number, number] => [i / 2, 40 + ((i * 5) % 9)]));
    const played = [...own, ...shift(cadence, 5, 0)];
    const stretches = stretchMatches(window(played), [{ piece: 0, shift: toGrains(5), dp: 0, within: 0 }], verify, [4.5]);
    expect(stretches[0]).toMatchObject({ notes: 12, onsets: 3, score: 1 });
    expect(hotStretch(stretches, rule({ lengths: [4.5], thresholds: [1], minOnsets: 3 }), distinct)?.stretch.beats).toBe(4.5);
    expect(hotStretch(stretches, rule({ lengths: [4.5], thresholds: [1], minOnsets: 4 }), distinct)).toBeNull();
  });

  it('common material (distinctiveness below the rule\'s) never warns, and distinctiveness is asked only of stretches past their threshold', () => {
    const stretches = stretchMatches(window(quoted(4)), [quoteCandidate], exact, [2, 4, 8, 16]);
    const asked: number[] = [];
    const common = (s: StretchMatch) => (asked.push(s.beats), 0.25);
    expect(hotStretch(stretches, rule(), common)).toBeNull();
    expect(asked).toEqual([4]);
  });

  describe('notes left out', () => {
    const own = pts(...Array.from({ length: 24 }, (_, i): [number, number] => [i / 2, 40 + ((i * 7) % 11)]));
    /** The whole tune from beat 12, up a fourth, as `change` leaves it; the 7.5-beat stretch holds the quote and none of the performer's own notes. */
    const played = (change: (p: Point) => Point | null): StretchMatch[] => {
      const quote = shift(tune, 12, 5).map(change).filter((p): p is Point => p !== null);
      return stretchMatches(window([...own, ...quote]), [quoteCandidate], exact, [7.5]);
    };
    /** The tune's note on its fourth beat, as quoted. */
    const fourthBeat = toGrains(12 + 3);

    it('a quote with one of its 13 notes dropped warns below its threshold: under a tenth left out, nothing wrong played', () => {
      const stretches = played((p) => (p.at === fourthBeat ? null : p));
      expect(stretches[0]).toMatchObject({ notes: 12, score: 12 / 13, match: { matched: 12, excerptNotes: 13 } });
      expect(leavesOut(stretches[0], 0.1)).toBe(true);
      expect(hotStretch(stretches, rule({ lengths: [7.5], thresholds: [1], leftOut: 0.1 }), distinct)?.stretch.beats).toBe(7.5);
      expect(hotStretch(stretches, rule({ lengths: [7.5], thresholds: [1], leftOut: 0 }), distinct)).toBeNull();
    });

    it('the share is strict: 1 of 13 is not under 1/13', () => {
      const stretches = played((p) => (p.at === fourthBeat ? null : p));
      expect(hotStretch(stretches, rule({ lengths: [7.5], thresholds: [1], leftOut: 1 / 13 }), distinct)).toBeNull();
      expect(leavesOut({ notes: 9, match: { piece: 0, pieceStart: 0, transposition: 0, matched: 9, excerptNotes: 10, score: 0.9 } }, 0.1)).toBe(false);
      expect(leavesOut({ notes: 10, match: { piece: 0, pieceStart: 0, transposition: 0, matched: 10, excerptNotes: 11, score: 10 / 11 } }, 0.1)).toBe(true);
    });

    it('a quote with one note played a semitone off scores the same, and does not warn: it holds a note the corpus passage lacks', () => {
      const stretches = played((p) => (p.at === fourthBeat ? { ...p, pitch: p.pitch - 1 } : p));
      expect(stretches[0]).toMatchObject({ notes: 13, score: 12 / 13, match: { matched: 12, excerptNotes: 13 } });
      expect(leavesOut(stretches[0], 0.5)).toBe(false);
      expect(hotStretch(stretches, rule({ lengths: [7.5], thresholds: [1], leftOut: 0.5 }), distinct)).toBeNull();
    });

    it('no match leaves nothing out', () => {
      expect(leavesOut({ notes: 4, match: null }, 0.5)).toBe(false);
    });
  });

  it('when none warns, the stretch shown is the one nearest its threshold', () => {
    const stretches = stretchMatches(window(quoted(4)), [quoteCandidate], exact, [2, 4, 8, 16]);
    expect(nearestStretch(stretches, rule({ thresholds: [1.05, 1.01, 0.8, 0.6] }))?.beats).toBe(4);
  });
});

describe('per-length thresholds', () => {
  it('are the baseline\'s score at each length plus the margin, a fallback where none is stored, and the nearest shorter length\'s between them', () => {
    const stored: Record<number, number> = { 2: 1, 4: 0.82, 16: 0.55 };
    const t = stretchThresholds([2, 4, 8, 16], (l) => stored[l], { margin: 0.05, fallback: 0.9 });
    expect(t).toEqual([1.05, 0.87, 0.9, 0.6]);
    expect(thresholdOf({ lengths: [2, 4, 8, 16], thresholds: t }, 6)).toBe(0.87);
    expect(thresholdOf({ lengths: [2, 4, 8, 16], thresholds: t }, 1)).toBe(1.05);
  });
});
