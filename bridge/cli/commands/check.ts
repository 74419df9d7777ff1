/**
 * `earwitness check`: the gate a training loop or CI job calls to reject a
 * checkpoint whose output copies the corpus. It scores the queries exactly
 * as `report` does (the same code path) and compares their pooled
 * originality with a bar: a number given with --min-originality, or, with
 * --against-baseline, the lower end of the 95% interval of the corpus's
 * human baseline (how original the corpus's own pieces are against the
 * rest of it). Exit 0 when the originality meets the bar, 1 when it falls
 * below, 2 when the command line or the input cannot be used.
 *
 * A gate judges every query or none: an unreadable query file is an
 * error, never skipped, so a broken output cannot pass by not being read.
 *
 * The baseline is taken from the corpus index when it stores one computed
 * exactly as this command would compute it (same window, hop, pitch,
 * exact matching through the index, seed, number of samples and windows
 * too short to judge, as
 * `corpus build --baseline` stores for 16-beat windows with hop 8);
 * otherwise it is computed.
 *
 * @example
 *   earwitness check out/ckpt-3000 --corpus training-set --against-baseline --json
 *   // → { "pass": false, "originality": 0.41, "ci95": [0.33, 0.48], "bar": 0.86, "barSource": "baseline", "baseline": {...}, "queries": [...], "caution": "…" }
 */
import type { Command } from 'commander';
import type { Baseline, OriginalityReport } from '../../../core/report.js';
import { IndexFileError, readIndexBaselines } from '../../formats/index-file.js';
import type { OpenedCorpus } from '../../corpus/open-corpus.js';
import { printJson } from '../options.js';
import { pct } from '../report-text.js';
import { EXIT, Outcome } from '../usage.js';
import { UsageError, parseNumber, wholeNumber } from '../../formats/user-error.js';
import { modeOf } from '../../corpus/report-settings.js';
import { type CorpusFlags, computeBaseline, corpusCommand, openForBatch, readQueries, scoreQueries } from './report.js';

interface CheckFlags extends CorpusFlags {
  minOriginality?: number;
  againstBaseline?: boolean;
  samples: number;
}

export interface CheckBaseline {
  originality: number | null;
  ci95: [number, number] | null;
  samples: number;
  windows: number;
  settings: Baseline['settings'];
  /** Stored in the corpus index, or computed by this run. */
  source: 'index' | 'computed';
  /** The index file it was read from. */
  index: string | null;
}

export interface CheckResult {
  pass: boolean;
  originality: number;
  ci95: [number, number] | null;
  bar: number;
  barSource: 'min-originality' | 'baseline';
  baseline?: CheckBaseline;
  queries: { file: string; originality: number | null }[];
  settings: OriginalityReport['settings'] & { mode: ReturnType<typeof modeOf> };
  caution: string;
}

const unitBar = (v: string): number => parseNumber('--min-originality', v, (n) => n >= 0 && n <= 1, 'a number from 0 to 1 (originality is 1 − the mean window score)');

/** The baseline the index stores for exactly these settings, or null. */
function storedBaseline(opened: OpenedCorpus, o: CheckFlags): Baseline | null {
  const mode = modeOf(o);
  // The index's baselines were matched through the index, exactly (no tolerance, not tempo-free): --exact scores otherwise.
  if (!opened.indexFile || o.exact || mode.tolerance !== 0 || mode.tempoFree) return null;
  let stored: Baseline[];
  try {
    stored = readIndexBaselines(opened.indexFile);
  } catch (e) {
    if (e instanceof IndexFileError) throw new UsageError(e.message);
    throw e;
  }
  const samples = Math.min(o.samples, opened.corpus.pieces.length);
  return (
    stored.find((b) => {
      const s = b.settings;
      return s.window === o.window && s.hop === o.hop && s.pitch === o.pitch && s.seed === o.seed && s.minNotes === o.minNotes && b.samples.length === samples;
    }) ?? null
  );
}

async function baselineFor(opened: OpenedCorpus, o: CheckFlags): Promise<CheckBaseline> {
  const stored = storedBaseline(opened, o);
  const b = stored ?? (await computeBaseline(opened, o));
  if (!b.ci95) {
    throw new UsageError(`--against-baseline: the human baseline of ${o.corpus} has no 95% interval (it needs 2 or more sampled pieces with ${o.window}-beat windows); give a bar with --min-originality instead`);
  }
  return {
    originality: b.originality,
    ci95: b.ci95,
    samples: b.samples.length,
    windows: b.windows,
    settings: b.settings,
    source: stored ? 'index' : 'computed',
    index: stored ? opened.indexFile : null,
  };
}

function checkText(r: CheckResult): string {
  const ci = r.ci95 ? ` (95% CI ${pct(r.ci95[0])}–${pct(r.ci95[1])})` : '';
  const bar = r.baseline
    ? `the lower end of the human baseline's 95% interval (${pct(r.baseline.ci95![0])}–${pct(r.baseline.ci95![1])}, ${r.baseline.samples} pieces, ${r.baseline.source === 'index' ? `stored in ${r.baseline.index}` : 'computed now'})`
    : '--min-originality';
  const lines = [
    `${r.pass ? 'pass' : 'FAIL'}: originality ${pct(r.originality)}${ci} is ${r.pass ? 'at or above' : 'below'} the bar ${pct(r.bar)}, ${bar}`,
    ...r.queries.map((q) => `  ${pct(q.originality).padStart(6)}  ${q.file}`),
    '',
    r.caution,
  ];
  return lines.join('\n');
}

export function registerCheck(cli: Command): void {
  corpusCommand(cli, 'check', 'gate: exit 0 when the queries\' pooled originality meets the bar, 1 when it falls below (for a training loop or CI)')
    .argument('<query...>', 'score files (MIDI, MusicXML, ABC) or folders (a model checkpoint\'s output, say)')
    .option('--min-originality <x>', 'the bar: an originality from 0 to 1', unitBar)
    .option('--against-baseline', "the bar: the lower end of the 95% interval of the corpus's human baseline")
    .option('--samples <n>', 'with --against-baseline: pieces the baseline samples', wholeNumber('--samples'), 50)
    .option('--seed <n>', 'seed of the bootstrap intervals and the baseline sample', wholeNumber('--seed'), 1)
    .addHelpText('after', '\nExit codes: 0 the originality meets the bar, 1 it is below the bar, 2 bad command line or unusable input.')
    .action(async (paths: string[], o: CheckFlags) => {
      if (o.minOriginality === undefined && !o.againstBaseline) throw new UsageError('check needs a bar: give --min-originality X (0 to 1) or --against-baseline');
      if (o.minOriginality !== undefined && o.againstBaseline) throw new UsageError('check takes one bar: give --min-originality or --against-baseline, not both');
      const opened = openForBatch(o);
      const { queries, skipped } = readQueries(paths, o);
      if (skipped.length) throw new UsageError(`check judges every query or none: ${skipped.length} of ${skipped.length + queries.length} query files cannot be read (${skipped.map((s) => s.file).join(', ')}); fix or remove them`);
      const { report } = await scoreQueries(opened, queries, o);
      if (report.originality === null) throw new UsageError(`nothing to judge: the query files (${paths.join(', ')}) hold no notes`);
      const baseline = o.againstBaseline ? await baselineFor(opened, o) : undefined;
      const bar = baseline ? baseline.ci95![0] : o.minOriginality!;
      const result: CheckResult = {
        pass: report.originality >= bar,
        originality: report.originality,
        ci95: report.ci95,
        bar,
        barSource: baseline ? 'baseline' : 'min-originality',
        ...(baseline ? { baseline } : {}),
        queries: report.queries.map((q) => ({ file: q.file, originality: q.originality })),
        settings: { ...report.settings, mode: modeOf(o) },
        caution: report.caution,
      };
      if (o.json) printJson(result);
      else process.stdout.write(checkText(result) + '\n');
      if (!result.pass) throw new Outcome(EXIT.belowBar, 'below the bar');
    });
}
