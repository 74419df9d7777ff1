/**
 * The originality report as one document: every window of every query
 * scored against an opened corpus, with the matching mode and the query
 * files that could not be read. `earwitness report --json` prints it, and
 * the daemon's `POST /report` answers it, through these same functions, so
 * the two agree to the letter for the same files and settings.
 *
 * @example
 *   const read = readableQueries(loadQueryBytes([{ name: 'take-3.mid', bytes }]), ['take-3.mid']);
 *   const { report } = scoreQueries(opened, read.queries, { window: 16, hop: 8, pitch: 'chromatic', seed: 1, tolerance: 0, minNotes: 8 });
 *   reportDocument(report, options, read.skipped)
 *   // → { originality: 0.82, ci95: null, windows: 5, tooShort: 1, queries: [...], settings, caution: "A similarity score is evidence …", mode, skipped: [] }
 */
import type { CorpusPoints } from '../../core/corpus.js';
import type { MatchMode } from '../../core/pipeline.js';
import type { WindowMatcher } from '../../core/match.js';
import { type OriginalityReport, type Progress, type QueryInput, originalityReport } from '../../core/report.js';
import { UsageError } from '../formats/user-error.js';
import type { Skipped } from './corpus-files.js';
import type { MatcherRequest, OpenedCorpus } from './open-corpus.js';
import { type ReportOptions, modeOf } from './report-settings.js';

export type ReportDocument = OriginalityReport & { mode: MatchMode; skipped: Skipped[] };

/** The queries read, unless none could be: then a UsageError naming the files given (the skipped ones say why). */
export function readableQueries<T extends { queries: unknown[]; skipped: Skipped[] }>(read: T, given: readonly string[]): T {
  if (read.queries.length === 0) throw new UsageError(`no readable query file among ${given.join(', ')}`);
  return read;
}

/** What reports and baselines match with: the corpus's one entry point, in the chosen matching mode. */
export const matcherRequest = (o: ReportOptions): MatcherRequest => ({ pitch: o.pitch, window: o.window, mode: modeOf(o), exact: o.exact });

/** The matcher reports and baselines score with in this process. */
export const matcherFor = (opened: OpenedCorpus, o: ReportOptions): WindowMatcher => opened.matcher(matcherRequest(o));

/** Every window of every query scored against the corpus (by `matcher`, else in this process): the report, and what `check` judges. */
export function scoreQueries(opened: OpenedCorpus, queries: readonly QueryInput[], o: ReportOptions, progress?: Progress, matcher: WindowMatcher = matcherFor(opened, o)): { view: CorpusPoints; report: OriginalityReport } {
  const view = opened.view(o.pitch);
  return { view, report: originalityReport(queries, view, matcher, o, progress) };
}

/** The report with its matching mode and the files skipped: what `report --json` prints and `POST /report` answers. */
export const reportDocument = (report: OriginalityReport, o: ReportOptions, skipped: Skipped[]): ReportDocument => ({ ...report, mode: modeOf(o), skipped });

/** The document as text: indented JSON and a newline, as the CLI prints it. */
export const documentText = (doc: ReportDocument): string => JSON.stringify(doc, null, 2) + '\n';
