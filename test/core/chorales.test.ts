/**
 * The originality report and the human baseline (core/report.ts) on real
 * music: four-part chorales from the open JSB chorales dataset (fixtures in
 * test/fixtures/jsb with their source note; split of Boulanger-Lewandowski,
 * Bengio & Vincent 2012). Corpus: the first 60 chorales of the `train` split.
 *
 * @example
 *   npx vitest run test/core/chorales.test.ts
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { type CorpusPoints, corpusPoints } from '../../core/corpus.js';
import { exactMatcher } from '../helpers/matchers.js';
import { type Baseline, CAUTION, humanBaseline, originalityReport } from '../../core/report.js';
import { corpusOf, pieceOf } from '../helpers/corpus.js';
import { moveNotes } from '../helpers/points.js';
import { type Chorale, decodeChorale, loadChorales } from '../helpers/jsb.js';

let train: Chorale[];
let test: Chorale[];
let view: CorpusPoints;

beforeAll(() => {
  ({ train, test } = loadChorales());
  view = corpusPoints(corpusOf(train.map((c) => pieceOf(`${c.path}.mid`, c.notes))), 'chromatic');
});

describe('chorale fixtures, decoded per the dataset README', () => {
  it('60 train and 3 test chorales, every voice read as notes on the sixteenth grid', () => {
    expect(train).toHaveLength(60);
    expect(test).toHaveLength(3);
    for (const c of [...train, ...test]) {
      expect(c.notes.length).toBeGreaterThan(50);
      expect(c.notes.every((n) => Number.isInteger(n.onset * 4) && n.duration > 0 && n.pitch >= 24 && n.pitch <= 96)).toBe(true);
    }
  });

  // The dataset's README: "Read that way the file holds 82,722 notes (92,536 steps)." Checked where the shared copy is at hand.
  const dataset = join(import.meta.dirname, '../../../shared/data/jsb-chorales/Jsb16thSeparated.json');
  it.skipIf(!existsSync(dataset))('decoding the whole dataset gives the 82,722 notes and 92,536 steps its README counts (skipped without ../shared/data)', () => {
    const all = Object.values(JSON.parse(readFileSync(dataset, 'utf8')) as Record<string, number[][][]>).flat();
    expect(all.reduce((n, c) => n + decodeChorale(c).length, 0)).toBe(82_722);
    expect(all.reduce((n, c) => n + c.length, 0)).toBe(92_536);
  });

  it('consecutive equal pitches form one note; a change of pitch or a −1 ends it', () => {
    // Soprano 74 74 75 75 | −1 | 74: a half-beat D, a half-beat E♭, a rest, a sixteenth D. Alto holds 70 throughout.
    const steps = [[74, 70, -1, -1], [74, 70, -1, -1], [75, 70, -1, -1], [75, 70, -1, -1], [-1, 70, -1, -1], [74, 70, -1, -1]];
    expect(decodeChorale(steps).map((n) => [n.onset, n.duration, n.pitch, n.channel])).toEqual([
      [0, 1.5, 70, 2],
      [0, 0.5, 74, 1],
      [0.5, 0.5, 75, 1],
      [1.25, 0.25, 74, 1],
    ]);
  });
});

describe('originality against the chorale corpus', () => {
  it('a corpus chorale moved 8 beats later (one hop) and 3 semitones up has originality 0, every window found in it', () => {
    const source = train[7];
    const r = originalityReport([{ file: 'moved.mid', notes: moveNotes(source.notes, 8, 3) }], view, exactMatcher(view, 16), { window: 16, hop: 8, seed: 1 });
    expect(r.originality).toBe(0);
    const windows = r.queries[0].windows;
    expect(windows.length).toBeGreaterThan(3);
    for (const w of windows) {
      expect(w.score).toBe(1);
      expect(w.match).toMatchObject({ piece: `${source.path}.mid`, transposition: 3, pieceStart: w.start - 8 });
    }
    expect(r.caution).toBe(CAUTION);
  });

  it('a held-out chorale (from the test split) does not: originality well above 0', () => {
    const r = originalityReport(test.map((c) => ({ file: `${c.path}.mid`, notes: c.notes })), view, exactMatcher(view, 16), { window: 16, hop: 8, seed: 3 });
    for (const q of r.queries) {
      expect(q.originality, q.file).toBeGreaterThan(0.2);
      expect(q.windows.every((w) => w.score < 1)).toBe(true);
    }
    const [lo, hi] = r.ci95!;
    expect(lo).toBeLessThanOrEqual(r.originality!);
    expect(hi).toBeGreaterThanOrEqual(r.originality!);
  });
});

describe('human baseline on the chorale corpus', () => {
  let wide: Baseline;
  let narrow: Baseline;
  beforeAll(() => {
    wide = humanBaseline(view, exactMatcher(view, 16), { window: 16, hop: 8, samples: 6, seed: 1 });
    narrow = humanBaseline(view, exactMatcher(view, 8), { window: 8, hop: 4, samples: 6, seed: 1 });
    // A few seconds alone; generous for a machine shared with other test runs.
  }, 180_000);

  it('is lower with 8-beat windows than with 16-beat ones (smaller windows find exact matches more easily)', () => {
    expect(narrow.originality!).toBeLessThan(wide.originality!);
    expect(narrow.percentiles.p50).toBeGreaterThan(wide.percentiles.p50);
  });

  it('samples the same pieces for the same seed, and reports ordered percentiles and an interval around its value', () => {
    expect(narrow.samples).toEqual(wide.samples);
    expect(new Set(wide.samples).size).toBe(6);
    for (const b of [wide, narrow]) {
      const p = b.percentiles;
      expect(p.p50).toBeLessThanOrEqual(p.p90);
      expect(p.p90).toBeLessThanOrEqual(p.p95);
      expect(p.p95).toBeLessThanOrEqual(p.p99);
      expect(p.p99).toBeLessThanOrEqual(1);
      expect(b.ci95![0]).toBeLessThanOrEqual(b.originality!);
      expect(b.ci95![1]).toBeGreaterThanOrEqual(b.originality!);
      expect(b.caution).toBe(CAUTION);
    }
  });

  it('leaves each sampled piece out: scored against itself every window would score 1', () => {
    // Each chorale is in the corpus, so without leaving it out the originality would be 0.
    expect(wide.originality!).toBeGreaterThan(0.2);
  });
});
