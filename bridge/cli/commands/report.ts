import { writeFileSync } from 'node:fs';
import type { Command } from 'commander';
import { type Baseline, type OriginalityReport, type QueryInput, humanBaseline } from '../../../core/report.js';
import type { CorpusPoints } from '../../../core/corpus.js';
import { loadQueries } from '../../corpus/corpus-files.js';
import type { OpenedCorpus } from '../../corpus/open-corpus.js';
import { documentText, matcherRequest, readableQueries, reportDocument, scoreQueries as scoreWith } from '../../corpus/report-document.js';
import { REPORT_DEFAULTS, type ReportOptions, modeOf } from '../../corpus/report-settings.js';
import { type QueueFlags, matchesHere, queueOption, queueTimeoutOption, withMatcher } from '../batch-matching.js';
import { openCorpusTold } from '../notices.js';
import { type BaselineFile, checkBaselineFits, readBaselineFile } from '../../formats/baseline-file.js';
import { writeReportHtml } from '../html/report-page.js';
import { hopOption, minNotesOption, pitchOption, printJson, tempoFreeOption, toleranceOption, windowOption } from '../options.js';
import { baselineText, reportCsv, reportText } from '../report-text.js';
import { UsageError, wholeNumber } from '../../formats/user-error.js';

/** The flags of every command that scores against a corpus (report, baseline, check). */
export interface CorpusFlags extends ReportOptions, QueueFlags {
  corpus: string;
  percussion?: boolean;
  json?: boolean;
}

export const corpusCommand = (cli: Command, name: string, description: string): Command =>
  cli
    .command(name)
    .description(description)
    .requiredOption('--corpus <path>', 'corpus folder, or an index file from "earwitness corpus build"')
    .option('--exact', 'match by brute force even where the corpus has an index (slow: the reference the index is checked against)')
    .addOption(windowOption())
    .addOption(hopOption())
    .addOption(pitchOption())
    .addOption(toleranceOption())
    .addOption(tempoFreeOption())
    .addOption(minNotesOption())
    .addOption(queueOption())
    .addOption(queueTimeoutOption())
    .option('--percussion', 'keep channel 10 (percussion)')
    .option('--json', 'print JSON');

/** Opens --corpus for a batch command: with --queue, without reading what only matching here needs. */
export const openForBatch = (o: CorpusFlags): OpenedCorpus => openCorpusTold(o.corpus, { ...o, matching: matchesHere(o) });

/** Reads the query files: each unreadable one is named on stderr and listed; none readable at all is an error. */
export function readQueries(paths: string[], o: CorpusFlags): ReturnType<typeof loadQueries> {
  const read = loadQueries(paths, o);
  for (const s of read.skipped) process.stderr.write(`earwitness: skipped ${s.file}: ${s.error}\n`);
  return readableQueries(read, paths);
}

/** Every window of every query scored against the corpus: the report, and what `check` judges. */
export const scoreQueries = (opened: OpenedCorpus, queries: QueryInput[], o: CorpusFlags): Promise<{ view: CorpusPoints; report: OriginalityReport }> =>
  withMatcher(opened, o, matcherRequest(o), 'scoring', (matcher, tick) => scoreWith(opened, queries, o, tick, matcher));

/** The corpus's human baseline: what `baseline` prints, and what `check --against-baseline` computes when none is stored. */
export async function computeBaseline(opened: OpenedCorpus, o: CorpusFlags & { samples: number }): Promise<Baseline> {
  if (o.samples < 1) throw new UsageError('--samples must be at least 1');
  const view = opened.view(o.pitch);
  return withMatcher(opened, o, matcherRequest(o), 'baseline', (matcher, tick) => humanBaseline(view, matcher, o, tick));
}

export function registerReport(cli: Command): void {
  corpusCommand(cli, 'report', 'originality report of score files (MIDI, MusicXML, ABC; or folders of them) against a corpus')
    .argument('<query...>', 'score files (MIDI, MusicXML, ABC) or folders')
    .option('--seed <n>', 'seed of the bootstrap interval', wholeNumber('--seed'), REPORT_DEFAULTS.seed)
    .option('--csv <file>', 'also write one row per window to this CSV file')
    .option('--html <file>', 'also write a self-contained HTML report (several query folders show as a series)')
    .option('--baseline <file>', 'human baseline JSON (from "earwitness baseline --json") to show beside it in the HTML', readBaselineFile)
    .action(async (paths: string[], o: CorpusFlags & { csv?: string; html?: string; baseline?: BaselineFile }) => {
      if (o.baseline) checkBaselineFits(o.baseline, { ...o, mode: modeOf(o) });
      const opened = openForBatch(o);
      const { queries, skipped } = readQueries(paths, o);
      const { view, report } = await scoreQueries(opened, queries, o);
      if (o.csv) writeFileSync(o.csv, reportCsv(report));
      if (o.html) writeReportHtml(o.html, { report, queries, corpus: view, source: o.corpus, mode: modeOf(o), baseline: o.baseline ?? null });
      if (o.json) process.stdout.write(documentText(reportDocument(report, o, skipped)));
      else process.stdout.write(reportText(report) + '\n');
    });

  corpusCommand(cli, 'baseline', 'human baseline: sampled corpus pieces scored against the rest of the corpus')
    .option('--samples <n>', 'how many pieces to sample', wholeNumber('--samples'), 50)
    .option('--seed <n>', 'seed of the sample and the bootstrap', wholeNumber('--seed'), 1)
    .action(async (o: CorpusFlags & { samples: number }) => {
      const b = await computeBaseline(openForBatch(o), o);
      if (o.json) printJson({ ...b, mode: modeOf(o) });
      else process.stdout.write(baselineText(b) + '\n');
    });
}
