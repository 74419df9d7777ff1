import { writeFileSync } from 'node:fs';
import type { Command } from 'commander';
import type { PitchMode } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import { exactMatcher } from '../../core/match.js';
import { humanBaseline, originalityReport } from '../../core/report.js';
import { loadQueries } from '../corpus-files.js';
import { openCorpus } from '../open-corpus.js';
import { hopOption, pitchOption, printJson, windowOption } from '../options.js';
import { progressBar } from '../progress.js';
import { baselineText, reportCsv, reportText } from '../report-text.js';
import { UsageError, wholeNumber } from '../usage.js';

interface CorpusFlags {
  corpus: string;
  window: number;
  hop: number;
  pitch: PitchMode;
  seed: number;
  percussion?: boolean;
  json?: boolean;
}

const corpusCommand = (cli: Command, name: string, description: string): Command =>
  cli
    .command(name)
    .description(description)
    .requiredOption('--corpus <path>', 'corpus folder')
    .addOption(windowOption())
    .addOption(hopOption())
    .addOption(pitchOption())
    .option('--percussion', 'keep channel 10 (percussion)')
    .option('--json', 'print JSON');

export function registerReport(cli: Command): void {
  corpusCommand(cli, 'report', 'originality report of MIDI files (or folders of them) against a corpus')
    .argument('<query...>', 'MIDI files or folders')
    .option('--seed <n>', 'seed of the bootstrap interval', wholeNumber('--seed'), 1)
    .option('--csv <file>', 'also write one row per window to this CSV file')
    .action((paths: string[], o: CorpusFlags & { csv?: string }) => {
      const { corpus } = openCorpus(o.corpus, o);
      const { queries, skipped } = loadQueries(paths, o);
      for (const s of skipped) process.stderr.write(`earwitness: skipped ${s.file}: ${s.error}\n`);
      if (queries.length === 0) throw new UsageError(`no readable query file among ${paths.join(', ')}`);
      const view = corpusPoints(corpus, o.pitch);
      const bar = progressBar('scoring');
      const report = originalityReport(queries, view, exactMatcher(view, o.window), o, bar.tick);
      bar.stop();
      if (o.csv) writeFileSync(o.csv, reportCsv(report));
      if (o.json) printJson({ ...report, skipped });
      else process.stdout.write(reportText(report) + '\n');
    });

  corpusCommand(cli, 'baseline', 'human baseline: sampled corpus pieces scored against the rest of the corpus')
    .option('--samples <n>', 'how many pieces to sample', wholeNumber('--samples'), 50)
    .option('--seed <n>', 'seed of the sample and the bootstrap', wholeNumber('--seed'), 1)
    .action((o: CorpusFlags & { samples: number }) => {
      if (o.samples < 1) throw new UsageError('--samples must be at least 1');
      const { corpus } = openCorpus(o.corpus, o);
      const view = corpusPoints(corpus, o.pitch);
      const bar = progressBar('baseline');
      const b = humanBaseline(view, exactMatcher(view, o.window), o, bar.tick);
      bar.stop();
      if (o.json) printJson(b);
      else process.stdout.write(baselineText(b) + '\n');
    });
}
