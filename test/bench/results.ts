/**
 * The benchmark's results file, test/bench/RESULTS.md: each run adds a
 * dated entry at the top of its "Runs" section, written from the run's own
 * JSON summary — the date, the machine's core count and load average (at
 * the start and the end of the run), and every figure of every row, one
 * column per corpus. Nothing is typed in by hand, so the file says what was
 * measured and nothing else.
 *
 * @example
 *   recordResults(summary)   // → 'test/bench/RESULTS.md' (written)
 *   resultsEntry({ rows: [{ corpus: '100k', notes: 100123 }] }, { date: new Date(), cores: 2, loadAverage: [0.4, 0.5, 0.6] })
 *   // → '### 2026-12-02 08:00 UTC — 2 cores, load average 0.4 / 0.5 / 0.6 …'
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { join } from 'node:path';
import { packageRoot } from '../../bridge/formats/package-root.js';

/** The line new entries go below. */
export const RUNS_MARK = '<!-- test/bench/results.ts adds each run below this line, newest first -->';

export interface Machine {
  date: Date;
  cores: number;
  /** 1, 5 and 15 minutes, at the end of the run. */
  loadAverage: number[];
}

type Row = Record<string, unknown>;

/** An object's leaves as dotted keys, in order: { a: { b: 1 } } → [['a.b', 1]]. */
function leaves(value: unknown, prefix = ''): [string, unknown][] {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) return [[prefix, value]];
  return Object.entries(value as Row).flatMap(([k, v]) => leaves(v, prefix ? `${prefix}.${k}` : k));
}

const cell = (v: unknown): string => (v === undefined ? '' : typeof v === 'string' ? v : JSON.stringify(v)).replace(/\|/g, '\\|');

/** A table with a column per row and a line per figure, headed by the rows' `label` field. */
function table(rows: Row[], label: string): string {
  const columns = rows.map((r) => new Map(leaves(r)));
  const keys = [...new Set(columns.flatMap((c) => [...c.keys()]))].filter((k) => k !== label);
  return [
    `| figure | ${rows.map((r) => cell(r[label])).join(' | ')} |`,
    `| --- |${rows.map(() => ' --- |').join('')}`,
    ...keys.map((k) => `| ${k} | ${columns.map((c) => cell(c.get(k))).join(' | ')} |`),
  ].join('\n');
}

/** One run's entry, in Markdown. */
export function resultsEntry(summary: Row, machine: Machine): string {
  const { rows, modes, ...run } = summary as Row & { rows?: Row[]; modes?: Row[] };
  const when = `${machine.date.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
  const load = machine.loadAverage.map((x) => x.toFixed(2)).join(' / ');
  const parts = [
    `### ${when} — ${machine.cores} cores, load average ${load} at the end (1 / 5 / 15 min)`,
    '',
    leaves(run).map(([k, v]) => `${k}: ${cell(v)}`).join('; '),
  ];
  if (rows?.length) parts.push('', table(rows, 'corpus'));
  if (modes?.length) parts.push('', table(modes, 'mode'));
  return parts.join('\n');
}

/** Adds the run to test/bench/RESULTS.md, newest first; returns the file's path. */
export function recordResults(summary: Row, file = join(packageRoot(), 'test', 'bench', 'RESULTS.md')): string {
  const text = readFileSync(file, 'utf8');
  if (!text.includes(RUNS_MARK)) throw new Error(`${file}: the line "${RUNS_MARK}" is missing; put it back under "## Runs"`);
  const entry = resultsEntry(summary, { date: new Date(), cores: availableParallelism(), loadAverage: loadavg() });
  writeFileSync(file, text.replace(RUNS_MARK, `${RUNS_MARK}\n\n${entry}\n`));
  return file;
}
