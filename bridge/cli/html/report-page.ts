/**
 * `report --html FILE`: the batch originality report as a page. Queries
 * named as several folders (say one per model checkpoint) are drawn as a
 * series, folder by folder, beside the human baseline when one is given;
 * every query gets a row with a sparkline of its window scores; the worst
 * windows across all queries are shown as piano-roll pairs.
 *
 * @example
 *   writeReportHtml('report.html', { report, queries, corpus: view, source: 'corpus/', mode: EXACT_MODE, baseline: null });
 */
import type { Note } from '../../../core/note.js';
import type { CorpusPoints } from '../../../core/corpus.js';
import type { MatchMode } from '../../../core/pipeline.js';
import { notesLength } from '../../../core/corpus.js';
import type { OriginalityReport } from '../../../core/report.js';
import { DEFAULT_WORST, folderSeries, worstPairs } from '../../../core/review.js';
import { type BaselineFile, checkBaselineFits } from '../../formats/baseline-file.js';
import { writeOutputFile } from '../../formats/output-file.js';
import { pct } from '../report-text.js';
import { seriesChart, sparkline } from './charts.js';
import { type Figure, esc, page, scoringText, section } from './page.js';
import { pairFigure, rollLegend } from './piano-roll.js';

export interface ReportPageInput {
  report: OriginalityReport;
  /** The queries in the report's order: their notes, and the folder each came from (null for a file named alone). */
  queries: readonly { file: string; notes: Note[]; folder: string | null }[];
  corpus: CorpusPoints;
  /** The corpus as the user named it. */
  source: string;
  mode: MatchMode;
  baseline: BaselineFile | null;
  worst?: number;
}

const ci = (c: [number, number] | null): string => (c ? `95% CI ${pct(c[0])}–${pct(c[1])}` : 'no interval (needs 2 or more queries)');

/** A path that may wrap after its slashes rather than inside a name. */
const breakable = (path: string): string => esc(path).replace(/\//g, '/<wbr>');

function queryTable(input: ReportPageInput): string {
  const rows = input.report.queries.map((q, i) => {
    const top = q.windows.reduce<(typeof q.windows)[number] | null>((a, w) => (!a || w.score > a.score ? w : a), null);
    return (
      `<tr><td>${breakable(q.file)}</td><td class="num">${q.notes}</td><td class="num">${q.windows.length}</td><td class="num"><strong>${pct(q.originality)}</strong></td>` +
      `<td>${sparkline(q.windows, notesLength(input.queries[i].notes), { meter: q.meter, pitch: input.report.settings.pitch })}</td>` +
      `<td>${top?.match ? `${esc(top.match.title)} <span class="where">${top.score.toFixed(3)}</span>` : '<span class="empty">no match</span>'}</td></tr>`
    );
  });
  return (
    '<table class="queries"><thead><tr><th>query</th><th class="num">notes</th><th class="num">windows</th><th class="num">originality</th>' +
    `<th>window scores</th><th>highest window</th></tr></thead><tbody>${rows.join('')}</tbody></table>`
  );
}

export function reportHtml(input: ReportPageInput): string {
  const { report, baseline } = input;
  const s = report.settings;
  if (baseline) checkBaselineFits(baseline, { ...s, mode: input.mode });
  const b = baseline?.baseline ?? null;
  const series = folderSeries(report.queries, input.queries.map((q) => q.folder), s.seed);
  const worst = worstPairs(
    input.queries.map((q, i) => ({ notes: q.notes, windows: report.queries[i].windows, meter: report.queries[i].meter })),
    input.corpus,
    input.worst ?? DEFAULT_WORST,
    input.mode.tolerance,
  );
  const figures: Figure[] = [
    { label: 'queries', value: String(report.queries.length), note: series.length > 1 ? `in ${series.length} folders` : undefined },
    { label: 'notes', value: String(report.queries.reduce((n, q) => n + q.notes, 0)) },
    { label: 'windows', value: String(report.windows), note: `${s.window} beats, hop ${s.hop}` },
    { label: 'originality', value: pct(report.originality), note: ci(report.ci95) },
  ];
  if (b) figures.push({ label: 'human baseline', value: pct(b.originality), note: ci(b.ci95) });
  const sections: string[] = [];
  if (series.length > 1) {
    sections.push(section('Originality by folder', seriesChart(series, b), 'One point per query folder, in the order they were named. Originality is 1 − the mean window score of the folder’s queries.'));
  }
  sections.push(section(`Queries (${report.queries.length})`, queryTable(input), 'The diamond on each sparkline marks the highest-scoring window; hover it for the passage.'));
  sections.push(
    section(
      'Worst windows',
      worst.length
        ? rollLegend() + worst.map((p) => pairFigure(p, { mode: s.pitch, queryLabel: report.queries[p.queryIndex].file })).join('')
        : '<p class="empty">No window matched anything in the corpus.</p>',
      'The highest-scoring windows across all queries, beside the corpus passage each resembles, each at its own pitch.',
    ),
  );
  return page({
    title: 'earwitness · heard against the corpus',
    heading: 'Heard against the corpus',
    lede: `${report.queries.length} ${report.queries.length === 1 ? 'query' : 'queries'} against the corpus ${input.source} (${input.corpus.pieces.length} pieces), in ${scoringText(s, input.mode)}.`,
    figures,
    sections,
    footer: `earwitness report · corpus ${input.source} · ${scoringText(s, input.mode)} · seed ${s.seed}${baseline ? ` · baseline ${baseline.file}` : ''}`,
  });
}

export function writeReportHtml(file: string, input: ReportPageInput): void {
  writeOutputFile('--html', file, reportHtml(input));
}
