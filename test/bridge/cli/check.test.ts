/**
 * `earwitness check`, the gate, as a CI job runs it (`node dist/bridge/cli.js
 * check …`, reading only the exit code and the JSON): on the demo corpus and
 * its queries, on temp copies, and on files written for the test.
 *
 * Known by construction: a query that is a copy of a corpus piece scores 1
 * in every window (the identity translation lands every point), so its
 * originality is exactly 0.
 */
import { spawnSync } from 'node:child_process';
import { copyFileSync, cpSync, mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { CAUTION } from '../../../core/report.js';
import { midiBytes } from '../../../bridge/formats/midi-write.js';
import { EXIT } from '../../../bridge/cli/usage.js';
import { CLI, ROOT, tempDir } from '../../helpers/daemon.js';

const CORPUS = join(ROOT, 'presets', 'demo', 'corpus');
const QUERIES = join(ROOT, 'presets', 'demo', 'queries');
const q = (name: string): string => join(QUERIES, `${name}.mid`);

const earwitness = (...args: string[]) => {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', timeout: 60_000 });
  expect(r.stderr, 'no stack trace').not.toContain('    at ');
  return r;
};
const json = (r: ReturnType<typeof earwitness>): any => JSON.parse(r.stdout);

let dir: string;
beforeAll(() => {
  dir = tempDir('check');
  copyFileSync(join(CORPUS, 'the-ninth-buoy.mid'), join(dir, 'copy.mid'));
  writeFileSync(join(dir, 'broken.mid'), 'this was never a MIDI file');
  writeFileSync(join(dir, 'silent.mid'), midiBytes([], { title: 'silence', bpm: 120 }));
  mkdirSync(join(dir, 'one-piece'));
  copyFileSync(join(CORPUS, 'skerrow-light.mid'), join(dir, 'one-piece', 'skerrow-light.mid'));
});

describe('earwitness check: the bar', () => {
  it('judges the pooled originality of the report, with the same numbers as `report`', () => {
    const report = json(earwitness('report', QUERIES, '--corpus', CORPUS, '--json'));
    const r = earwitness('check', QUERIES, '--corpus', CORPUS, '--min-originality', '0.6', '--json');
    expect(r.status).toBe(EXIT.ok);
    const c = json(r);
    expect(c).toMatchObject({ pass: true, originality: report.originality, ci95: report.ci95, bar: 0.6, barSource: 'min-originality', caution: CAUTION });
    expect(c.baseline).toBeUndefined();
    expect(c.queries).toEqual(report.queries.map((x: { file: string; originality: number }) => ({ file: x.file, originality: x.originality })));
  });

  it('exits 1 below the bar and 0 at it: a copy of a corpus piece has originality exactly 0', () => {
    const below = earwitness('check', join(dir, 'copy.mid'), '--corpus', CORPUS, '--min-originality', '0.01', '--json');
    expect(below.status).toBe(EXIT.belowBar);
    expect(json(below)).toMatchObject({ pass: false, originality: 0, bar: 0.01 });
    const at = earwitness('check', join(dir, 'copy.mid'), '--corpus', CORPUS, '--min-originality', '0');
    expect(at.status).toBe(EXIT.ok);
    expect(at.stdout).toMatch(/^pass: originality 0\.0% is at or above the bar 0\.0%/);
    expect(at.stdout).toContain(CAUTION);
  });

  it('names the failing query in the text output', () => {
    const r = earwitness('check', q('quote'), q('cadence'), '--corpus', CORPUS, '--min-originality', '0.7');
    expect(r.status).toBe(EXIT.belowBar);
    expect(r.stdout).toMatch(/^FAIL: originality \d+\.\d% \(95% CI [\d.]+%–[\d.]+%\) is below the bar 70\.0%, --min-originality$/m);
    expect(r.stdout).toMatch(/51\.3%\s+\S*quote\.mid/);
  });
});

describe('earwitness check --against-baseline', () => {
  it('uses the lower end of the human baseline interval, computed as `baseline` computes it', () => {
    const b = json(earwitness('baseline', '--corpus', CORPUS, '--json'));
    const quote = earwitness('check', q('quote'), '--corpus', CORPUS, '--against-baseline', '--json');
    expect(quote.status).toBe(EXIT.belowBar);
    const c = json(quote);
    expect(c).toMatchObject({ pass: false, bar: b.ci95[0], barSource: 'baseline' });
    expect(c.baseline).toEqual({ originality: b.originality, ci95: b.ci95, samples: b.samples.length, windows: b.windows, settings: b.settings, source: 'computed', index: null });
    // The quote borrows 29 notes of one tune (presets/demo/README.md); the stock cadence borrows nothing.
    expect(earwitness('check', q('cadence'), '--corpus', CORPUS, '--against-baseline').status).toBe(EXIT.ok);
  });

  it('takes the baseline stored in the corpus index when it was computed with the same settings', () => {
    const copy = join(tempDir('check-index'), 'corpus');
    cpSync(CORPUS, copy, { recursive: true });
    expect(earwitness('corpus', 'build', copy, '--baseline').status).toBe(EXIT.ok);
    const index = join(copy, '.earwitness-index');
    const computed = json(earwitness('baseline', '--corpus', copy, '--json'));
    const stored = json(earwitness('check', q('cadence'), '--corpus', copy, '--against-baseline', '--json'));
    expect(stored.baseline).toMatchObject({ source: 'index', index, ci95: computed.ci95, originality: computed.originality });
    expect(stored.bar).toBe(computed.ci95[0]);
    // Another seed, or brute-force matching, is not what the index stored: computed afresh.
    expect(json(earwitness('check', q('cadence'), '--corpus', copy, '--against-baseline', '--seed', '2', '--json')).baseline.source).toBe('computed');
    const exact = json(earwitness('check', q('cadence'), '--corpus', copy, '--against-baseline', '--exact', '--json'));
    expect(exact.baseline).toMatchObject({ source: 'computed', index: null });
  });

  it('refuses a corpus too small for a baseline', () => {
    const r = earwitness('check', q('quote'), '--corpus', join(dir, 'one-piece'), '--against-baseline');
    expect(r.status).toBe(EXIT.usage);
    expect(r.stderr).toMatch(/a baseline needs at least 2 corpus pieces, the corpus has 1/);
  });
});

describe('earwitness check: usage errors exit 2 and say what is wrong', () => {
  it.each([
    [['--corpus', CORPUS], /check needs a bar: give --min-originality X \(0 to 1\) or --against-baseline/],
    [['--corpus', CORPUS, '--min-originality', '0.5', '--against-baseline'], /check takes one bar: give --min-originality or --against-baseline, not both/],
    [['--corpus', CORPUS, '--min-originality', '1.5'], /--min-originality must be a number from 0 to 1 .*got "1\.5"/],
    [['--corpus', CORPUS, '--min-originality', '-0.1'], /--min-originality must be a number from 0 to 1 .*got "-0\.1"/],
    [['--corpus', CORPUS, '--min-originality', 'high'], /--min-originality must be a number from 0 to 1 .*got "high"/],
    [['--corpus', '/no/such/corpus', '--min-originality', '0.5'], /--corpus \/no\/such\/corpus: no such folder or index file/],
  ])('%j', (args, message) => {
    const r = earwitness('check', q('fresh'), ...args);
    expect(r.status).toBe(EXIT.usage);
    expect(r.stderr).toMatch(message);
    expect(r.stdout).toBe('');
  });

  it('judges every query or none: an unreadable query file is an error, named', () => {
    const r = earwitness('check', q('fresh'), join(dir, 'broken.mid'), '--corpus', CORPUS, '--min-originality', '0.5');
    expect(r.status).toBe(EXIT.usage);
    expect(r.stderr).toMatch(/check judges every query or none: 1 of 2 query files cannot be read \(.*broken\.mid\)/);
  });

  it('refuses queries with no notes, and a missing query', () => {
    const silent = earwitness('check', join(dir, 'silent.mid'), '--corpus', CORPUS, '--min-originality', '0.5');
    expect(silent.status).toBe(EXIT.usage);
    expect(silent.stderr).toMatch(/nothing to judge: the query files \(.*silent\.mid\) hold no notes/);
    const missing = earwitness('check', join(dir, 'nope.mid'), '--corpus', CORPUS, '--min-originality', '0.5');
    expect(missing.status).toBe(EXIT.usage);
    expect(missing.stderr).toMatch(/nope\.mid.*no such file or folder/);
  });
});
