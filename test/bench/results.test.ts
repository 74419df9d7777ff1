/**
 * The benchmark's results file (test/bench/results.ts): an entry per run,
 * dated, with the machine's cores and load average, and every figure of the
 * run's JSON in a column per corpus; added at the top, the rest kept.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { RUNS_MARK, recordResults, resultsEntry } from './results.js';

const dir = mkdtempSync(join(tmpdir(), 'ew-results-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const summary = {
  quick: true,
  seconds: 25,
  rows: [
    { corpus: 'synthetic 100k', mode: 'exact', notes: 100123, index: { p50Ms: 0.22, p99Ms: 0.42 } },
    { corpus: 'synthetic 1M', mode: 'exact', notes: 1000456, index: { p50Ms: 0.4, p99Ms: 1.25 }, recall: { share: null } },
  ],
  modes: [],
};

describe('a run in the results file', () => {
  it('is headed by its date, the cores and the load average, and lists every figure of every row', () => {
    const entry = resultsEntry(summary, { date: new Date('2026-12-02T08:30:00Z'), cores: 2, loadAverage: [0.4, 0.5, 0.61] });
    expect(entry.split('\n')[0]).toBe('### 2026-12-02 08:30 UTC — 2 cores, load average 0.40 / 0.50 / 0.61 at the end (1 / 5 / 15 min)');
    expect(entry).toContain('quick: true; seconds: 25');
    expect(entry).toContain('| figure | synthetic 100k | synthetic 1M |');
    expect(entry).toContain('| index.p99Ms | 0.42 | 1.25 |');
    expect(entry).toContain('| recall.share |  | null |');
  });

  it('goes in at the top of the runs, and the file keeps what it held', () => {
    const file = join(dir, 'RESULTS.md');
    writeFileSync(file, `# Measured results\n\n## Runs\n\n${RUNS_MARK}\n\n### older run\n\n## Before this file\n`);
    recordResults(summary, file);
    const text = readFileSync(file, 'utf8');
    expect(text.indexOf('synthetic 100k')).toBeGreaterThan(text.indexOf(RUNS_MARK));
    expect(text.indexOf('synthetic 100k')).toBeLessThan(text.indexOf('### older run'));
    expect(text).toContain('## Before this file');
    writeFileSync(file, '# no mark\n');
    expect(() => recordResults(summary, file)).toThrow(/the line .* is missing/);
  });
});
