/**
 * Any tempo: symbolic fingerprinting (Arzt, Böck & Widmer 2012, ISMIR) on
 * JSB chorale copies played slower and faster (source:
 * test/fixtures/jsb/README.md — Bach chorales from the open JSB data set; train 0–39 as the corpus).
 */
import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { toGrains, toPoints } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import { buildFingerprints, fingerprintCandidates, scaleTime } from '../../core/fingerprint.js';
import { flattenPoints } from '../../core/triple-index.js';
import { verifier } from '../../core/verify.js';
import { chorales, passage, played } from '../helpers/material.js';
import { pieceOf } from '../helpers/corpus.js';
import { exactMatcher, indexedMatcher, matchCorpusOf } from '../helpers/matchers.js';

const { corpus } = chorales();
const view = corpusPoints(corpus, 'chromatic');
const exact = exactMatcher(view, 16);
const TEMPO_FREE = { tolerance: 0, tempoFree: true };
const tempoFree = exactMatcher(view, 16, { mode: TEMPO_FREE });
const tempoFreeIndexed = indexedMatcher(view, 16, { mode: TEMPO_FREE });

/** The first 16 played beats of beats 8–40 of a chorale, played `scale` times as long, maybe transposed and jittered. */
const take = (piece: number, scale: number, extra: { transpose?: number; jitter?: number } = {}) =>
  toPoints(played(passage(corpus.pieces[piece].notes, 8, 40), { scale, seed: piece, ...extra })).filter((p) => p.at < toGrains(16));

describe('copies at another tempo', () => {
  for (const scale of [1.5, 0.75, 2]) {
    test(`played ${scale}× as long: found, with timeScale within 2% of ${scale}`, () => {
      for (const piece of [1, 10, 20, 30]) {
        const window = take(piece, scale);
        const m = tempoFree.best({ points: window, startGrains: 0 })!;
        // Candidates from the triple index or from every translation: the tempo-free candidates are the same.
        expect(tempoFreeIndexed.best({ points: window, startGrains: 0 })).toEqual(m);
        expect(m.piece).toBe(piece);
        expect(Math.abs(m.pieceStart - 8)).toBeLessThan(0.25);
        expect(m.transposition).toBe(0);
        expect(Math.abs(m.timeScale! / scale - 1)).toBeLessThan(0.02);
        expect(m.score).toBeGreaterThanOrEqual(0.9);
        // The exact path at the written tempo cannot see it.
        expect(exact.best({ points: window, startGrains: 0 })!.score).toBeLessThan(0.5);
      }
    });
  }

  test('transposed and slower: the transposition is found as well', () => {
    const m = tempoFree.best({ points: take(12, 1.5, { transpose: -3 }), startGrains: 0 })!;
    expect(m).toMatchObject({ piece: 12, transposition: -3 });
    expect(Math.abs(m.timeScale! / 1.5 - 1)).toBeLessThan(0.02);
  });

  test('slower and played with human timing (±0.03 beat): found over a tolerance matcher', () => {
    const matcher = indexedMatcher(view, 16, { mode: { tolerance: 0.1, tempoFree: true } });
    const m = matcher.best({ points: take(7, 1.5, { jitter: 0.03 }), startGrains: 0 })!;
    expect(m.piece).toBe(7);
    expect(Math.abs(m.timeScale! / 1.5 - 1)).toBeLessThan(0.02);
    expect(m.score).toBeGreaterThanOrEqual(0.7);
  });

  test('at the written tempo the plain candidates’ answer stands, with time scale 1', () => {
    const window = take(4, 1);
    expect(tempoFree.best({ points: window, startGrains: 0 })).toEqual({ ...exact.best({ points: window, startGrains: 0 }), timeScale: 1 });
  });

  test('the piece being scored is left out, as the baseline asks', () => {
    const m = tempoFree.best({ points: take(3, 1.5), startGrains: 0, exclude: 3 });
    expect(m?.piece).not.toBe(3);
  });
});

describe('fingerprints', () => {
  test('a triple’s key survives transposition and tempo change (same keys for a scaled, transposed corpus)', () => {
    const steps = fc.array(fc.record({ step: fc.integer({ min: 0, max: 40 }), pitch: fc.integer({ min: 50, max: 70 }) }), { minLength: 3, maxLength: 25 });
    fc.assert(
      fc.property(steps, fc.constantFrom(0.5, 0.75, 1.5, 2), fc.integer({ min: -7, max: 7 }), (ns, scale, transpose) => {
        const notes = ns.map((n) => ({ onset: n.step * 0.25, duration: 0.25, pitch: n.pitch, morph: n.pitch, velocity: 80, channel: 1 }));
        const moved = notes.map((n) => ({ ...n, onset: n.onset * scale, pitch: n.pitch + transpose }));
        const keys = (ps: typeof notes) => {
          const table = buildFingerprints(flattenPoints(corpusPoints({ pieces: [pieceOf('p.mid', ps)] }, 'chromatic')));
          return [...table.keys].map((k, i) => `${k}:${table.starts[i + 1] - table.starts[i]}`);
        };
        expect(keys(moved)).toEqual(keys(notes));
      }),
      { numRuns: 100 },
    );
  });

  test('scaleTime maps a window onto the corpus’s time, offsets from the start divided by the scale', () => {
    expect(scaleTime([{ at: 3840, pitch: 60 }, { at: 3840 + 5760, pitch: 62 }], 3840, 1.5)).toEqual([{ at: 3840, pitch: 60 }, { at: 3840 + 3840, pitch: 62 }]);
  });

  test('refuses settings outside their limits, naming them', () => {
    const { flat, fingerprints } = matchCorpusOf(view);
    expect(() => fingerprintCandidates(flat, fingerprints!(), { minScale: 0 })).toThrow(/minScale/);
    expect(() => buildFingerprints(flat, { fanOut: 0, minGap: 0.125 })).toThrow(/fanOut/);
    expect(() => fingerprintCandidates(flat, fingerprints!(), { tolerance: 2 })).toThrow(/tolerance/);
    expect(() => fingerprintCandidates(flat, fingerprints!(), { maxPostings: 0 })).toThrow(/maxPostings must be at least 1/);
  });

  test('a key posted more often than maxPostings is never read: with every key posted twice, a cap of 1 leaves nothing to vote; over every key’s count, the cap changes nothing', () => {
    // The corpus twice over: each triple is posted at least twice.
    const { flat, fingerprints } = matchCorpusOf({ ...view, pieces: [...view.pieces, ...view.pieces], points: [...view.points, ...view.points], size: 2 * view.size });
    const table = fingerprints!();
    let most = 0;
    for (let k = 0; k + 1 < table.starts.length; k++) most = Math.max(most, table.starts[k + 1] - table.starts[k]);
    const window = { points: take(10, 1.5), startGrains: 0 };
    const verify = verifier(flat, 0.05);
    const best = (maxPostings: number) => fingerprintCandidates(flat, table, { maxPostings }).best(window, verify, toGrains(16));
    const uncapped = best(Infinity);
    expect([10, 10 + view.pieces.length]).toContain(uncapped?.piece);
    expect(best(most)).toEqual(uncapped);
    expect(best(1)).toBeNull();
  });
});
