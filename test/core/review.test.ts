import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { toPoints } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import { exactMatcher } from '../helpers/matchers.js';
import { type WindowResult, originalityReport } from '../../core/report.js';
import { excerptPair, folderSeries, worstPairs, worstWindows } from '../../core/review.js';
import { defaultLogFile } from '../../bridge/formats/paths.js';
import { corpusOf, pieceOf } from '../helpers/corpus.js';
import { notesOf, pointSet, translation } from '../helpers/points.js';

const win = (start: number, score: number, matched = Math.round(score * 10)): WindowResult => ({
  start,
  end: start + 16,
  notes: 10,
  score,
  tooShort: false,
  match: score > 0 ? { piece: 'a.mid', title: 'a', pieceStart: 0, transposition: 0, matched, excerptNotes: 10 } : null,
});

describe('worst windows', () => {
  it('takes the highest scores first and passes over windows overlapping one already taken', () => {
    const ws = [win(0, 0.2), win(8, 0.9), win(16, 0.95), win(24, 0.9), win(32, 0.1), win(40, 0.5)];
    // 16–32 is worst; 8–24 and 24–40 overlap it; 40–56 is next, then 0–16.
    expect(worstWindows(ws, 3).map((w) => w.start)).toEqual([16, 40, 0]);
    expect(worstWindows(ws, 1).map((w) => w.start)).toEqual([16]);
    expect(worstWindows(ws, 0)).toEqual([]);
  });

  it('leaves out windows that matched nothing', () => {
    expect(worstWindows([win(0, 0), win(16, 0)], 3)).toEqual([]);
  });

  it('breaks equal scores by more matched notes, then the earlier window', () => {
    expect(worstWindows([win(32, 0.5, 5), win(0, 0.5, 5), win(16, 0.5, 6)], 3).map((w) => w.start)).toEqual([16, 0, 32]);
  });
});

describe('excerpt pairs', () => {
  // A piece, and a query that plays its beats 4–12 a fourth higher at beats 16–24 among notes of its own.
  const piece = pieceOf('p.mid', notesOf([[0, 60], [1, 62], [2, 64], [4, 65], [5, 67], [6, 69], [7, 67], [8, 65], [9, 64], [10, 62], [11, 60], [12, 59], [14, 60]]));
  const quoted = piece.notes.filter((n) => n.onset >= 4 && n.onset < 12).map((n) => ({ ...n, onset: n.onset + 12, pitch: n.pitch + 5, morph: n.pitch + 5 }));
  const query = [...notesOf([[16.5, 40], [18.25, 90], [23.75, 41]]), ...quoted].sort((a, b) => a.onset - b.onset);
  const view = corpusPoints(corpusOf([piece]), 'chromatic');

  it('flags exactly the notes the translation lands on the other excerpt', () => {
    const [w] = originalityReport([{ file: 'q', notes: query }], view, exactMatcher(view, 8), { window: 8, hop: 8 }).queries[0].windows.filter((x) => x.start === 16);
    expect(w.match).toMatchObject({ pieceStart: 4, transposition: 5, matched: 8 });
    const pair = excerptPair(query, w as Parameters<typeof excerptPair>[1], piece, 'chromatic');
    expect(pair.query.filter((n) => n.matched).map((n) => [n.onset, n.pitch])).toEqual(quoted.map((n) => [n.onset, n.pitch]));
    expect(pair.query.filter((n) => !n.matched).map((n) => n.pitch)).toEqual([40, 90, 41]);
    expect(pair.corpus.map((n) => n.onset)).toEqual([4, 5, 6, 7, 8, 9, 10, 11]);
    expect(pair.corpus.every((n) => n.matched)).toBe(true);
  });

  it('the flagged points number exactly the matched count, for any pattern hidden at any translation', () => {
    fc.assert(
      fc.property(pointSet({ min: 3, max: 14, beats: 8 }), pointSet({ min: 0, max: 10, beats: 8 }), translation(16), (pattern, noise, [dt, dp]) => {
        const corpusNotes = notesOf(pattern.map((p) => [p.at / 3840 + 24, p.pitch]));
        const queryNotes = notesOf([...pattern.map((p): [number, number] => [p.at / 3840 + 24 + dt, p.pitch + dp]), ...noise.map((p): [number, number] => [p.at / 3840 + 24 + dt, p.pitch + 30])]);
        const v = corpusPoints(corpusOf([pieceOf('c.mid', corpusNotes)]), 'chromatic');
        const r = originalityReport([{ file: 'q', notes: queryNotes }], v, exactMatcher(v, 16), { window: 16, hop: 4 });
        const pairs = worstPairs([{ notes: queryNotes, windows: r.queries[0].windows }], v, 3);
        for (const p of pairs) {
          const flagged = (ns: typeof p.query) => toPoints(ns.filter((n) => n.matched)).length;
          expect(flagged(p.query)).toBe(p.window.match.matched);
          expect(flagged(p.corpus)).toBe(p.window.match.matched);
        }
        return pairs.length > 0;
      }),
      { numRuns: 60, seed: 6 },
    );
  });

  it('ranks pairs across queries and says which query each came from', () => {
    const other = notesOf([[0, 61], [3, 90], [5.5, 30]]);
    const r = originalityReport([{ file: 'x', notes: other }, { file: 'q', notes: query }], view, exactMatcher(view, 8), { window: 8, hop: 8 });
    const pairs = worstPairs(r.queries.map((q, i) => ({ notes: [other, query][i], windows: q.windows })), view, 2);
    expect(pairs[0]).toMatchObject({ rank: 1, queryIndex: 1, window: { start: 16, score: 8 / 11 } });
    expect(pairs.map((p) => p.rank)).toEqual([1, 2]);
  });
});

describe('folder series', () => {
  const piece = pieceOf('p.mid', notesOf([[0, 60], [1, 62], [2, 64], [3, 65], [4, 67], [5, 65], [6, 64], [7, 62]]));
  const view = corpusPoints(corpusOf([piece]), 'chromatic');
  const q = (file: string, pairs: [number, number][]) => ({ file, notes: notesOf(pairs) });
  const queries = [
    q('a/1.mid', [[0, 60], [1, 62], [2, 64], [3, 65]]),
    q('b/1.mid', [[0, 30], [1, 90], [2, 31]]),
    q('a/2.mid', [[0, 70], [1, 72], [2, 40], [3, 90]]),
    q('loose.mid', [[0, 60]]),
    q('b/2.mid', [[0, 67], [1, 65], [2, 64], [3, 62]]),
  ];
  const folders = ['a', 'b', 'a', null, 'b'];
  const report = originalityReport(queries, view, exactMatcher(view, 4), { window: 4, hop: 4, seed: 3 });

  it('keeps the folders in the order first named, leaving out files named alone', () => {
    const s = folderSeries(report.queries, folders, 3);
    expect(s.map((p) => [p.folder, p.queries])).toEqual([['a', 2], ['b', 2]]);
  });

  it('gives each folder the originality and interval its queries would have as a report of their own', () => {
    for (const [folder, point] of folderSeries(report.queries, folders, 3).map((p) => [p.folder, p] as const)) {
      const own = originalityReport(queries.filter((_, i) => folders[i] === folder), view, exactMatcher(view, 4), { window: 4, hop: 4, seed: 3 });
      expect(point.originality).toBeCloseTo(own.originality!, 12);
      expect(point.ci95).toEqual(own.ci95);
      expect(point.windows).toBe(own.windows);
    }
  });

  it('refuses folders that do not line up with the queries', () => {
    expect(() => folderSeries(report.queries, ['a'], 1)).toThrow(/5 queries but 1 folders/);
  });
});

describe('default session log path', () => {
  // XDG Base Directory Specification 0.8: $XDG_DATA_HOME, else $HOME/.local/share; a relative path is invalid and ignored.
  it('follows the XDG Base Directory specification', () => {
    expect(defaultLogFile({ XDG_DATA_HOME: '/srv/data' }, '/home/ana')).toBe('/srv/data/earwitness/sessions.db');
    expect(defaultLogFile({}, '/home/ana')).toBe('/home/ana/.local/share/earwitness/sessions.db');
    expect(defaultLogFile({ XDG_DATA_HOME: 'relative/data' }, '/home/ana')).toBe('/home/ana/.local/share/earwitness/sessions.db');
  });
});
