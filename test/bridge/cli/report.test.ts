/**
 * The command line end to end, as a user runs it: `node dist/bridge/cli.js`
 * (built by `npm test`; for a quick run, `npx tsc -p tsconfig.json` first) on
 * MIDI files written into a temporary folder — chorales from the open JSB
 * dataset fixtures, through the SMF writer in test/helpers/smf.mjs.
 *
 * @example
 *   npx tsc -p tsconfig.json && npx vitest run test/bridge/cli/report.test.ts
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Note, toPoints } from '../../../core/note.js';
import { cardinalityScore } from '../../../core/cardinality.js';
import { CAUTION } from '../../../core/report.js';
import { readMidi } from '../../../bridge/formats/midi-file.js';
import { EXIT } from '../../../bridge/cli/usage.js';
import { loadChorales } from '../../helpers/jsb.js';
import { moveNotes } from '../../helpers/points.js';
import { notesFile } from '../../helpers/smf.mjs';

const CLI = join(import.meta.dirname, '../../../dist/bridge/cli.js');

interface Run {
  status: number | null;
  stdout: string;
  stderr: string;
}

const earwitness = (...args: string[]): Run => {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', timeout: 60_000 });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
};

const json = (r: Run): any => {
  expect(r.stderr.includes('    at '), `no stack trace on stderr:\n${r.stderr}`).toBe(false);
  expect(r.status, r.stderr).toBe(EXIT.ok);
  return JSON.parse(r.stdout);
};

let dir: string;
let corpus: string;
let queries: string;
let quoted: Note[];
const file = (...parts: string[]): string => join(dir, ...parts);

beforeAll(() => {
  if (!existsSync(CLI)) throw new Error(`${CLI} is missing: build first (npx tsc -p tsconfig.json, or npm test, which builds)`);
  const { train, test } = loadChorales();
  dir = mkdtempSync(join(tmpdir(), 'earwitness-cli-'));
  corpus = file('corpus');
  queries = file('queries');
  mkdirSync(join(corpus, 'more'), { recursive: true });
  mkdirSync(queries);
  // Six chorales, one in a subfolder; a file that is no MIDI and one that is not even named .mid.
  train.slice(0, 6).forEach((c, i) => writeFileSync(join(corpus, i === 5 ? 'more' : '', `chorale-${i}.mid`), notesFile(c.notes, { ppq: 480 })));
  writeFileSync(join(corpus, 'broken.mid'), 'this was never a MIDI file');
  writeFileSync(join(corpus, 'notes.txt'), 'not a corpus piece');
  quoted = moveNotes(train[2].notes, 8, 3);
  writeFileSync(join(queries, 'quote.mid'), notesFile(quoted, { ppq: 960 }));
  writeFileSync(join(queries, 'held-out.mid'), notesFile(test[0].notes, { ppq: 384 }));
  writeFileSync(join(queries, 'unreadable.mid'), Uint8Array.from([0x4d, 0x54, 0x68, 0x64, 0, 0, 0, 6, 0, 0, 0, 1, 1, 0xe0, 0x4d]));
});

afterAll(() => {
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('earwitness score', () => {
  it('A.mid B.mid --json → {score, matched, sizes, translation: {beats, pitch}}: a transposed, shifted copy scores 1', () => {
    const r = json(earwitness('score', join(corpus, 'chorale-2.mid'), join(queries, 'quote.mid'), '--json'));
    const n = toPoints(readMidi(join(corpus, 'chorale-2.mid')).notes).length;
    expect(r).toEqual({ score: 1, matched: n, sizes: [n, n], translation: { beats: 8, pitch: 3 }, caution: CAUTION });
  });

  it('two different chorales: the same figures as the core computes from the files', () => {
    const [a, b] = [join(corpus, 'chorale-0.mid'), join(corpus, 'chorale-1.mid')];
    const r = json(earwitness('score', a, b, '--json'));
    const expected = cardinalityScore(toPoints(readMidi(a).notes), toPoints(readMidi(b).notes));
    expect(r).toMatchObject(expected);
    expect(r.score).toBeGreaterThan(0);
    expect(r.score).toBeLessThan(0.5);
  });

  it('prints a readable line and the caution without --json', () => {
    const r = earwitness('score', join(corpus, 'chorale-2.mid'), join(queries, 'quote.mid'));
    expect(r.status).toBe(EXIT.ok);
    expect(r.stdout).toMatch(/^score 1\.000: \d+ notes coincide/);
    expect(r.stdout).toContain(CAUTION);
  });
});

describe('earwitness report', () => {
  let run: Run;
  let report: any;
  const csv = (): string => file('windows.csv');
  beforeAll(() => {
    run = earwitness('report', queries, '--corpus', corpus, '--json', '--csv', csv());
    report = json(run);
  });

  it('QUERY --corpus DIR --json gives the documented shape', () => {
    expect(report.originality).toEqual(expect.any(Number));
    expect(report.ci95).toEqual([expect.any(Number), expect.any(Number)]);
    expect(report.caution).toBe(CAUTION);
    expect(report.queries.map((q: any) => q.file).sort()).toEqual([join(queries, 'held-out.mid'), join(queries, 'quote.mid')].sort());
    for (const q of report.queries) {
      expect(q).toMatchObject({ file: expect.any(String), notes: expect.any(Number), originality: expect.any(Number) });
      expect(q.windows.length).toBeGreaterThan(0);
      for (const w of q.windows) {
        expect(w).toMatchObject({ start: expect.any(Number), end: w.start + 16, notes: expect.any(Number), score: expect.any(Number) });
        expect(w.start % 8).toBe(0);
        if (w.match !== null) expect(w.match).toMatchObject({ piece: expect.any(String), pieceStart: expect.any(Number), transposition: expect.any(Number), matched: expect.any(Number) });
      }
    }
  });

  it('the quoting query has originality 0: each window found in chorale-2 at 3 semitones up, 8 beats earlier', () => {
    const q = report.queries.find((x: any) => x.file.endsWith('quote.mid'));
    expect(q.originality).toBe(0);
    expect(q.notes).toBe(quoted.length);
    for (const w of q.windows) expect(w.match).toMatchObject({ piece: 'chorale-2.mid', transposition: 3, pieceStart: w.start - 8 });
  });

  it('the held-out chorale does not', () => {
    expect(report.queries.find((x: any) => x.file.endsWith('held-out.mid')).originality).toBeGreaterThan(0.2);
  });

  it('an unreadable query and corpus file are skipped with a message naming each, and the run still succeeds', () => {
    expect(run.status).toBe(EXIT.ok);
    expect(run.stderr).toMatch(/skipped .*unreadable\.mid: .+/);
    expect(run.stderr).toMatch(/skipped broken\.mid: not a Standard MIDI File/);
  });

  it('--csv FILE writes a header and one row a window', () => {
    const lines = readFileSync(csv(), 'utf8').trim().split('\n');
    expect(lines[0].split(',').slice(0, 14)).toEqual(['file', 'start', 'end', 'bar', 'beat_in_bar', 'notes', 'score', 'piece', 'title', 'piece_start', 'piece_bar', 'piece_beat_in_bar', 'transposition', 'matched']);
    const windows = report.queries.flatMap((q: any) => q.windows);
    expect(lines).toHaveLength(1 + windows.length);
    const first = lines[1].split(',');
    expect(first.slice(1, 7).map(Number)).toEqual([windows[0].start, windows[0].end, windows[0].bar, windows[0].beatInBar, windows[0].notes, windows[0].score]);
  });

  it('without --json, a readable table that ends with the caution', () => {
    const r = earwitness('report', join(queries, 'quote.mid'), '--corpus', corpus);
    expect(r.status).toBe(EXIT.ok);
    expect(r.stdout).toMatch(/^originality 0\.0% over \d+ windows of 16 beats \(hop 8, chromatic pitch\)/);
    // The chorales carry no time signature: 4/4. The quote's windows lie 8 beats after the chorale's: its first, from bar 1,
    // begins 8 beats before the chorale does, said in words; its second, from bar 3, is the chorale's bar 1, beat 1.
    expect(r.stdout).toMatch(/\n  1:1–5:1 .* chorale-2 from 8 beats before the piece begins, 3 semitones up/);
    expect(r.stdout).toMatch(/\n  3:1–7:1 .* chorale-2 from bar 1, beat 1, 3 semitones up/);
    expect(r.stdout).not.toMatch(/[\s(]-\d/); // no negative position
    expect(r.stdout.trimEnd().endsWith(CAUTION)).toBe(true);
  });
});

describe('earwitness baseline', () => {
  it('--corpus DIR --json gives {originality, ci95, samples, windows, percentiles: {p50, p90, p95, p99}}, the same for the same seed', () => {
    const args = ['baseline', '--corpus', corpus, '--samples', '4', '--seed', '9', '--json'];
    const b = json(earwitness(...args));
    expect(b).toMatchObject({ originality: expect.any(Number), windows: expect.any(Number), caution: CAUTION });
    expect(b.ci95).toEqual([expect.any(Number), expect.any(Number)]);
    expect(b.samples).toHaveLength(4);
    for (const s of b.samples) expect(s).toMatch(/^(more\/)?chorale-\d\.mid$/);
    const p = b.percentiles;
    expect(Object.keys(p).sort()).toEqual(['p50', 'p90', 'p95', 'p99']);
    expect(p.p50 <= p.p90 && p.p90 <= p.p95 && p.p95 <= p.p99 && p.p99 <= 1).toBe(true);
    expect(json(earwitness(...args))).toEqual(b);
  });
});

describe('bad command lines: exit 2 and a message that names what is wrong', () => {
  const usage = (r: Run, message: RegExp): void => {
    expect(r.status).toBe(EXIT.usage);
    expect(r.stderr).toMatch(message);
    expect(r.stderr.includes('    at '), `no stack trace:\n${r.stderr}`).toBe(false);
  };

  it('a missing corpus folder', () => {
    usage(earwitness('report', queries, '--corpus', file('no-such-corpus')), /--corpus .*no-such-corpus: no such folder/);
    usage(earwitness('baseline', '--corpus', file('no-such-corpus')), /no-such-corpus: no such folder/);
  });

  it('--window 0', () => {
    usage(earwitness('report', queries, '--corpus', corpus, '--window', '0'), /--window must be a positive number, got "0"/);
  });

  it('a query path that does not exist', () => {
    usage(earwitness('report', file('typo.mid'), '--corpus', corpus), /typo\.mid: no such file or folder/);
  });

  it('a score of a file that is not MIDI', () => {
    usage(earwitness('score', join(corpus, 'broken.mid'), join(queries, 'quote.mid')), /broken\.mid: not a Standard MIDI File/);
  });
});
