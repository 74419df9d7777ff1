/**
 * `report` and `baseline` with --tolerance and --tempo-free, end to end as a
 * user runs them: `node dist/bridge/cli.js` (built by `npm test`; for a quick
 * run, `npx tsc -p tsconfig.json` first) on MIDI files of JSB chorales
 * (test/fixtures/jsb/README.md) written through test/helpers/smf.mjs.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { CAUTION } from '../../../core/report.js';
import { EXIT } from '../../../bridge/cli/usage.js';
import { notesFile } from '../../helpers/smf.mjs';
import { chorales, passage, played } from '../../helpers/material.js';

const CLI = join(import.meta.dirname, '../../../dist/bridge/cli.js');
const earwitness = (...args: string[]) => spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', timeout: 120_000 });

let dir: string;
const at = (...parts: string[]) => join(dir, ...parts);

/** Onsets to the nearest 1/960 beat (the file's resolution), durations kept positive. */
const onTicks = <N extends { onset: number; duration: number }>(notes: N[]): N[] =>
  notes.map((n) => ({ ...n, onset: Math.round(n.onset * 960) / 960, duration: Math.max(1, Math.round(n.duration * 960)) / 960 }));

beforeAll(() => {
  if (!existsSync(CLI)) throw new Error(`${CLI} is missing: build first (npx tsc -p tsconfig.json, or npm test, which builds)`);
  const { corpus } = chorales();
  dir = mkdtempSync(join(tmpdir(), 'earwitness-beyond-'));
  mkdirSync(at('corpus'));
  corpus.pieces.slice(0, 8).forEach((p, i) => writeFileSync(at('corpus', `chorale-${i}.mid`), notesFile(p.notes, { ppq: 960 })));
  const source = corpus.pieces[3].notes;
  writeFileSync(at('slower.mid'), notesFile(onTicks(played(passage(source, 0, 16), { scale: 1.5, seed: 1 })), { ppq: 960 }));
  writeFileSync(at('loose.mid'), notesFile(onTicks(played(passage(source, 0, 32), { jitter: 0.06, drop: 0.1, seed: 2 })), { ppq: 960 }));
});

afterAll(() => {
  if (dir) rmSync(dir, { recursive: true, force: true });
});

const json = (r: ReturnType<typeof earwitness>) => {
  expect(r.status, r.stderr).toBe(EXIT.ok);
  return JSON.parse(r.stdout);
};

describe('report --tempo-free', () => {
  test('a chorale played 1.5× as long: the first window is found with timeScale within 2% of 1.5, and distinctiveness', () => {
    const r = json(earwitness('report', at('slower.mid'), '--corpus', at('corpus'), '--tempo-free', '--json'));
    const m = r.queries[0].windows[0].match;
    expect(m).toMatchObject({ piece: 'chorale-3.mid', transposition: 0 });
    expect(Math.abs(m.timeScale / 1.5 - 1)).toBeLessThan(0.02);
    expect(r.queries[0].windows[0].score).toBeGreaterThanOrEqual(0.9);
    expect(m.distinctiveness).toBeGreaterThan(0);
    expect(r.mode).toEqual({ tolerance: 0, tempoFree: true });
    expect(r.caution).toBe(CAUTION);
  });

  test('without it the same file scores low, and matches carry distinctiveness but no timeScale', () => {
    const r = json(earwitness('report', at('slower.mid'), '--corpus', at('corpus'), '--json'));
    const w = r.queries[0].windows[0];
    expect(w.score).toBeLessThan(0.5);
    expect(w.match.timeScale).toBeUndefined();
    expect(w.match.distinctiveness).toBeGreaterThan(0);
  });
});

describe('report --tolerance', () => {
  test('a copy played with ±0.06 beat timing and 10% of notes dropped scores ≥ 0.7 at 0.1 beat, lower exactly', () => {
    const loose = json(earwitness('report', at('loose.mid'), '--corpus', at('corpus'), '--tolerance', '0.1', '--json'));
    const strict = json(earwitness('report', at('loose.mid'), '--corpus', at('corpus'), '--json'));
    const first = (r: any) => r.queries[0].windows[0];
    expect(first(loose).score).toBeGreaterThanOrEqual(0.7);
    expect(first(loose).match.piece).toBe('chorale-3.mid');
    expect(first(strict).score).toBeLessThan(first(loose).score);
  });

  test('the text report names the distinctiveness and the time scale, and ends with the caution', () => {
    const r = earwitness('report', at('slower.mid'), '--corpus', at('corpus'), '--tolerance', '0.05', '--tempo-free');
    expect(r.status, r.stderr).toBe(EXIT.ok);
    expect(r.stdout).toMatch(/chorale-3 from bar 1, beat 1, same pitch, \d+ notes matched, time scale 1\.50, distinctiveness \d\.\d\d/);
    expect(r.stdout.trimEnd().endsWith(CAUTION)).toBe(true);
  });

  for (const bad of ['-0.1', '1', 'soon']) {
    test(`--tolerance ${bad}: exit 2 with a message naming the option`, () => {
      const r = earwitness('report', at('loose.mid'), '--corpus', at('corpus'), '--tolerance', bad);
      expect(r.status).toBe(EXIT.usage);
      expect(r.stderr).toContain(`--tolerance must be a number of beats from 0 up to (not including) 1, got "${bad}"`);
    });
  }
});

describe('baseline in each mode', () => {
  test('--tolerance 0.1 --tempo-free gives a baseline no lower than the exact one, and says which mode', () => {
    const args = ['baseline', '--corpus', at('corpus'), '--samples', '3', '--seed', '4', '--json'];
    const exact = json(earwitness(...args));
    const loose = json(earwitness(...args, '--tolerance', '0.1', '--tempo-free'));
    expect(loose.mode).toEqual({ tolerance: 0.1, tempoFree: true });
    expect(loose.samples).toEqual(exact.samples);
    // Looser matching finds at least as much in each window, so the corpus looks no more original.
    expect(loose.originality).toBeLessThanOrEqual(exact.originality + 1e-9);
    expect(loose.caution).toBe(CAUTION);
  });
});
