/**
 * The one matching pipeline (core/pipeline.ts): whatever the candidate
 * source, a window never scores above the reference (every translation
 * verified), in every mode; through the corpus's one entry point a corpus
 * small enough is matched with every translation, so a folder and its index
 * give the same report to the letter. Property tests with fast-check on
 * random point sets (our own), and the invented demo corpus (presets/demo).
 */
import { cpSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { toGrains } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import { windows } from '../../core/windows.js';
import { EVERY_TRANSLATION_UP_TO, type MatchMode, candidatesFor } from '../../core/pipeline.js';
import { LiveMatcher } from '../../core/live-match.js';
import { spawnSync } from 'node:child_process';
import { openCorpus } from '../../bridge/corpus/open-corpus.js';
import { corpusOf, pieceOf } from '../helpers/corpus.js';
import { notesOf, pointSet, shift } from '../helpers/points.js';
import { exactMatcher, indexedMatcher, matchCorpusOf } from '../helpers/matchers.js';

const MODES: MatchMode[] = [
  { tolerance: 0, tempoFree: false },
  { tolerance: 0.1, tempoFree: false },
  { tolerance: 0, tempoFree: true },
  { tolerance: 0.1, tempoFree: true },
];

describe('no candidate source scores a window above the reference (fast-check)', () => {
  // Pieces, and queries that copy part of one (moved, some notes nudged off the grid) or are new.
  const corpusArb = fc.array(pointSet({ min: 3, max: 40, beats: 32 }), { minLength: 1, maxLength: 4 });
  const nudge = fc.array(fc.integer({ min: -300, max: 300 }), { minLength: 40, maxLength: 40 });

  it.each(MODES.map((m) => [`tolerance ${m.tolerance}${m.tempoFree ? ', tempo-free' : ''}`, m] as const))('%s: index candidates and live candidates ≤ every translation', (_, mode) => {
    fc.assert(
      fc.property(corpusArb, pointSet({ beats: 16 }), fc.nat(3), fc.boolean(), nudge, (pieces, fresh, which, copy, jitter) => {
        const view = corpusPoints(corpusOf(pieces.map((p, i) => pieceOf(`p${i}.mid`, notesOf(p.map((q): [number, number] => [q.at / toGrains(1), q.pitch]))))), 'chromatic');
        const source = pieces[which % pieces.length];
        const query = copy ? shift(source, 4, 2).map((p, i) => ({ at: Math.max(0, p.at + (mode.tolerance ? jitter[i % 40] : 0)), pitch: p.pitch })).sort((a, b) => a.at - b.at || a.pitch - b.pitch) : fresh;
        const unique = query.filter((p, i) => i === 0 || p.at !== query[i - 1].at || p.pitch !== query[i - 1].pitch);
        const reference = exactMatcher(view, 8, { mode });
        const indexed = indexedMatcher(view, 8, { mode });
        for (const w of windows(unique, { window: 8, hop: 4 })) {
          const window = { points: w.points, startGrains: toGrains(w.start) };
          const ref = reference.best(window)?.score ?? 0;
          expect(indexed.best(window)?.score ?? 0).toBeLessThanOrEqual(ref + 1e-12);
          const live = new LiveMatcher(matchCorpusOf(view), { windowBeats: 8, mode }).best(window);
          expect(live?.score ?? 0).toBeLessThanOrEqual(ref + 1e-12);
        }
      }),
      { numRuns: mode.tempoFree ? 25 : 40 },
    );
  });
});

describe('the reference tempo-free', () => {
  it('searches the fingerprint places in full after every translation: a place scoring under the played-tempo match at its estimated tempo can win refitted (a case fast-check found)', () => {
    // Our own points: a five-note chord, then a few notes far on; the window copies four of them, moved and nudged.
    const piece = [[0, 55], [0, 56], [0, 57], [0, 58], [0, 59], [24, 55], [24, 56], [25, 55], [25.25, 55], [28.5, 55]] as [number, number][];
    const view = corpusPoints(corpusOf([pieceOf('p0.mid', notesOf(piece))]), 'chromatic');
    const window = { points: [{ at: 107691, pitch: 58 }, { at: 111264, pitch: 57 }, { at: 112616, pitch: 57 }, { at: 125014, pitch: 57 }], startGrains: toGrains(28) };
    const mode = { tolerance: 0.1, tempoFree: true };
    const reference = exactMatcher(view, 8, { mode }).best(window)!;
    expect(reference.score).toBe(1);
    expect(reference.timeScale).not.toBe(1);
    expect(indexedMatcher(view, 8, { mode }).best(window)!.score).toBeLessThanOrEqual(reference.score);
  });
});

describe('the entry point', () => {
  it(`matches a corpus of at most ${EVERY_TRANSLATION_UP_TO} points with every translation, a larger one with the index's candidates, and --exact always with every translation`, () => {
    expect(candidatesFor(733, false)).toBe('every');
    expect(candidatesFor(EVERY_TRANSLATION_UP_TO, false)).toBe('every');
    expect(candidatesFor(EVERY_TRANSLATION_UP_TO + 1, false)).toBe('index');
    expect(candidatesFor(10_000_000, true)).toBe('every');
  });

  const dir = mkdtempSync(join(tmpdir(), 'ew-pipeline-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it.each([
    ['exact', { tolerance: 0, tempoFree: false }],
    ['tolerance 0.1', { tolerance: 0.1, tempoFree: false }],
    ['tempo-free', { tolerance: 0, tempoFree: true }],
  ] as const)('the demo corpus as a folder and as its index: the same matches to the letter (%s)', (_, mode) => {
    const folder = join(dir, `demo-${mode.tolerance}-${mode.tempoFree}`);
    cpSync(join(import.meta.dirname, '../../presets/demo/corpus'), folder, { recursive: true });
    const query = openCorpus(join(import.meta.dirname, '../../presets/demo/corpus')).view('chromatic').points;
    const asRead = openCorpus(folder).matcher({ pitch: 'chromatic', window: 16, mode });
    // As a user builds it: the built CLI, whose worker threads run from dist/.
    expect(spawnSync(process.execPath, [join(import.meta.dirname, '../../dist/bridge/cli.js'), 'corpus', 'build', folder]).status).toBe(0);
    const indexed = openCorpus(folder);
    expect(indexed.indexFile).not.toBeNull();
    const throughIndex = indexed.matcher({ pitch: 'chromatic', window: 16, mode });
    let compared = 0;
    // Each demo tune, moved a beat later and a tone up, is a query.
    for (const tune of query) {
      for (const w of windows(shift(tune, 1, 2), { window: 16, hop: 8 })) {
        const window = { points: w.points, startGrains: toGrains(w.start) };
        expect(throughIndex.best(window)).toEqual(asRead.best(window));
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(30);
  });
});
