/**
 * `earwitness sessions` lists what the session log holds; `earwitness
 * review ID|latest` re-scores a logged session with the batch report's
 * windows and writes it as a page (--html), a Standard MIDI File (--midi),
 * the worst windows as MIDI pairs (--pairs) or JSON (--json).
 *
 * The log is only ever opened read-only: reviewing cannot change what was
 * recorded, and every problem with it is an error naming the file.
 *
 * @example
 *   earwitness sessions
 *   earwitness review latest --html review.html --midi session.mid --pairs pairs/
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import type { Command } from 'commander';
import type { PitchMode } from '../../../core/note.js';
import { notesLength } from '../../../core/corpus.js';
import { EXACT_MODE } from '../../../core/pipeline.js';
import { CAUTION, originalityReport } from '../../../core/report.js';
import { DEFAULT_WORST, type MarkedNote, snapOnsets, worstPairs } from '../../../core/review.js';
import { spellNotes } from '../../../core/spelling.js';
import { DEFAULT_BPM } from '../../../core/tempo.js';
import { DEFAULT_WINDOW } from '../../../core/windows.js';
import { type BaselineFile, checkBaselineFits, readBaselineFile } from '../../formats/baseline-file.js';
import { describeWindow } from '../html/charts.js';
import { type ReviewSettings, type SessionReview, clock, reviewHtml, whyTheyDiffer } from '../html/review-page.js';
import { midiBytes, tracksByChannel } from '../../formats/midi-write.js';
import type { OpenedCorpus } from '../../corpus/open-corpus.js';
import { openCorpusTold } from '../notices.js';
import { type QueueFlags, matchesHere, queueOption, queueTimeoutOption, withMatcher } from '../batch-matching.js';
import { minNotesOption, printJson } from '../options.js';
import { writeOutputFile } from '../../formats/output-file.js';
import { defaultLogFile } from '../../formats/paths.js';
import { pct } from '../report-text.js';
import { barFields, parseSignature } from '../../../core/bars.js';
import { heardPasses, warningPairs } from '../../../core/live-review.js';
import { SCORING_PASSES, pitchWords, placedWords, positionWords, spanText, transpositionWords } from '../../../core/words.js';
import { type LoggedNote, type LoggedScore, type LoggedWarning, type SessionSummary, SessionLog, loggedNoteSchema, loggedScoreSchema, sessionSettingsSchema } from '../../formats/session-log.js';
import { readSaved } from '../../formats/saved.js';
import { UsageError, wholeNumber } from '../../formats/user-error.js';

const logOption = `session log (default: ${defaultLogFile()})`;

type LoggedSession = { summary: SessionSummary; notes: LoggedNote[]; warnings: LoggedWarning[]; scores: LoggedScore[] };

const sessionId = (v: string): number | 'latest' => {
  if (v === 'latest') return v;
  if (/^\d+$/.test(v) && Number(v) > 0) return Number(v);
  throw new UsageError(`session must be an id that "earwitness sessions" lists, or "latest"; got "${v}"`);
};

/** Runs `read` on the log opened read-only; any failure is an error naming the log. */
function withLog<T>(file: string, read: (log: SessionLog) => T): T {
  if (!existsSync(file)) throw new UsageError(`${file}: no session log there (the daemon writes one while you play; name another with --log FILE)`);
  let log: SessionLog;
  try {
    log = SessionLog.open(file, { readonly: true });
  } catch (e) {
    throw new UsageError((e as Error).message);
  }
  try {
    return read(log);
  } catch (e) {
    if (e instanceof UsageError) throw e;
    throw new UsageError(`${file}: damaged session log (${(e as Error).message})`);
  } finally {
    log.close();
  }
}

function readSession(file: string, id: number | 'latest'): LoggedSession {
  const s = withLog(file, (log) => {
    const found = log.session(id);
    if (found) return found;
    const ids = log.listSessions().map((x) => x.id);
    if (ids.length === 0) throw new UsageError(`${file}: the log holds no sessions yet`);
    const held = ids.length === 1 ? `session ${ids[0]}` : `sessions ${ids[0]}–${ids[ids.length - 1]}`;
    throw new UsageError(`${file}: no session ${id} in the log (it holds ${held}; "earwitness sessions --log ${file}" lists them)`);
  });
  const name = `${file}: session ${s.summary.id}`;
  if (s.notes.length === 0) throw new UsageError(`${name} holds no notes, so there is nothing to review`);
  for (const n of s.notes) readSaved(loggedNoteSchema, n, (p) => new UsageError(`${name} is damaged: note ${n.seq} has ${p.field} ${p.got} (expected ${p.expected}); review another session, or mend the row with a SQLite tool`));
  for (const [i, x] of s.scores.entries()) readSaved(loggedScoreSchema, x, (p) => new UsageError(`${name} is damaged: live score ${i + 1} has ${p.field} ${p.got} (expected ${p.expected}); review another session, or mend the row with a SQLite tool`));
  return s;
}

/** The session's settings as the daemon stored them; ones it did not store take the batch report's defaults. */
function sessionSettings(file: string, summary: SessionSummary, minNotes: number): ReviewSettings {
  const s = readSaved(sessionSettingsSchema, summary.settings, (p) =>
    new UsageError(`${file}: session ${summary.id} has unusable settings: settings.${p.field}: got ${p.got}; expected ${p.expected}; review another session, or mend the setting with a SQLite tool`));
  return {
    window: s.window ?? DEFAULT_WINDOW.window,
    hop: s.hop ?? DEFAULT_WINDOW.hop,
    pitch: s.pitch ?? 'chromatic',
    mode: { tolerance: s.tolerance ?? EXACT_MODE.tolerance, tempoFree: s.tempoFree ?? EXACT_MODE.tempoFree },
    threshold: s.threshold ?? null,
    bpm: s.bpm ?? DEFAULT_BPM,
    grid: s.grid ?? 0,
    minNotes,
    meter: [{ beat: 0, ...(parseSignature(s.meter ?? '4/4') ?? { numerator: 4, denominator: 4 }) }],
    liveScores: s.liveScores ?? false,
  };
}

function openSessionCorpus(summary: SessionSummary, override: string | undefined, pitch: PitchMode, matching: boolean): OpenedCorpus {
  if (override) return openCorpusTold(override, { pitch, matching });
  try {
    return openCorpusTold(summary.corpus, { pitch, matching });
  } catch (e) {
    if (!(e instanceof UsageError)) throw e;
    throw new UsageError(`session ${summary.id} was heard against the corpus ${summary.corpus}, which cannot be opened now (${e.message}); pass --corpus PATH to review it against a copy elsewhere`);
  }
}

function durationSeconds(s: LoggedSession): number | null {
  const start = Date.parse(s.summary.start);
  const end = s.summary.end ? Date.parse(s.summary.end) : s.notes.reduce((last, n) => Math.max(last, n.receivedAt), -Infinity);
  return Number.isFinite(start) && Number.isFinite(end) ? Math.max(0, (end - start) / 1000) : null;
}

async function buildReview(s: LoggedSession, settings: ReviewSettings, opened: OpenedCorpus, options: QueueFlags & { corpus: string; worst: number; exact: boolean }): Promise<SessionReview> {
  const view = opened.view(settings.pitch);
  // The log keeps notes as played, in MIDI numbers: snap them as the live scorer did, and for
  // morphetic scoring spell them in the key they suggest.
  const snapped = snapOnsets(s.notes, settings.grid);
  const notes = settings.pitch === 'morphetic' ? spellNotes(snapped) : snapped;
  // The mode the session was heard with, through the corpus's one entry point (its index unless --exact).
  const request = { pitch: settings.pitch, window: settings.window, mode: settings.mode, exact: options.exact };
  const report = await withMatcher(opened, options, request, 'scoring', (matcher) => originalityReport([{ file: `session ${s.summary.id}`, notes, meter: settings.meter }], view, matcher, { ...settings, seed: 1 }));
  const q = report.queries[0];
  const start = Date.parse(s.summary.start);
  const { id, end, corpus: corpusPath, preset } = s.summary;
  return {
    id,
    start: s.summary.start,
    end,
    corpus: corpusPath,
    preset,
    settings,
    notes: q.notes,
    beats: notesLength(notes),
    seconds: durationSeconds(s),
    originality: q.originality,
    warnings: s.warnings.map((w) => {
      const piece = view.pieces.find((p) => p.path === w.piece);
      const inPiece = barFields(piece?.meter ?? [], piece ? w.pieceStart : null);
      return { ...w, ...barFields(settings.meter, w.startBeat), pieceBar: inPiece.bar, pieceBeatInBar: inPiece.beatInBar, elapsed: Number.isFinite(start) ? (w.raisedAt - start) / 1000 : null };
    }),
    live: settings.liveScores ? heardPasses(s.scores, { meter: settings.meter, pieces: view.pieces }) : null,
    windows: q.windows,
    worst: worstPairs([{ notes, windows: q.windows, meter: settings.meter }], view, options.worst, settings.mode.tolerance),
    warned: warningPairs(snapped, s.warnings, { pieces: view.pieces, window: settings.window, tolerance: settings.mode.tolerance, meter: settings.meter }),
    caution: CAUTION,
  };
}

/** Matched and other notes on separate tracks, so a DAW can solo what the two excerpts share. */
const markedTracks = (notes: readonly MarkedNote[]) => [
  ...tracksByChannel(notes.filter((n) => n.matched), (ch) => `matched notes, channel ${ch}`),
  ...tracksByChannel(notes.filter((n) => !n.matched), (ch) => `other notes, channel ${ch}`),
];

/** Each pair as two MIDI files, `NAME-N-session.mid` and `NAME-N-corpus.mid`: the worst windows as `pair`, the live warnings as `warning`. */
function writePairs(dir: string, r: SessionReview, protect: string[]): string[] {
  const written: string[] = [];
  const write = (p: SessionReview['worst'][number], name: string): void => {
    const w = p.window;
    const span = (w.end - w.start) / (w.match.timeScale ?? 1);
    const session = join(dir, `${name}-${p.rank}-session.mid`);
    const corpus = join(dir, `${name}-${p.rank}-corpus.mid`);
    const opts = { bpm: r.settings.bpm };
    // A passage found before the piece's first beat starts the file at the piece's start.
    const from = Math.max(0, w.match.pieceStart);
    writeOutputFile('--pairs', session, midiBytes(markedTracks(p.query), { ...opts, title: `session ${r.id}, bars ${spanText(p.queryMeter, w.start, w.end)} (${name} ${p.rank})`, from: w.start }), { protect });
    writeOutputFile('--pairs', corpus, midiBytes(markedTracks(p.corpus), { ...opts, title: `${w.match.title}, bars ${spanText(p.pieceMeter, w.match.pieceStart, w.match.pieceStart + span)} (${name} ${p.rank})`, from }), { protect });
    written.push(session, corpus);
  };
  for (const p of r.worst) write(p, 'pair');
  for (const p of r.warned) write(p, 'warning');
  return written;
}

function reviewText(r: SessionReview): string {
  const s = r.settings;
  const lines = [
    `session ${r.id}: ${r.notes} notes${r.seconds === null ? '' : ` over ${clock(r.seconds)}`}, ${r.windows.length} windows of ${s.window} beats (hop ${s.hop}, ${pitchWords(s.pitch)} pitch), ` +
      `originality ${pct(r.originality)}; ${r.warnings.length} warning${r.warnings.length === 1 ? '' : 's'} raised live`,
  ];
  if (r.live === null) lines.push('live scores: not in the log (it was written before live scores were kept); the warnings below are what was heard live');
  else if (r.live.length) {
    const top = r.live.reduce((a, b) => (b.score > a.score ? b : a));
    lines.push(`live: ${r.live.length} ${SCORING_PASSES}, highest ${top.score.toFixed(3)} at ${positionWords(s.meter, top.beat, 'the session')}`);
  }
  if (r.warnings.length) {
    lines.push('warnings raised live:', ...r.warnings.map((w, i) =>
      `  ${i + 1}. at ${positionWords(s.meter, w.startBeat, 'the session')}: score ${w.score.toFixed(3)}, ${w.title} from ${placedWords({ bar: w.pieceBar, beatInBar: w.pieceBeatInBar }, w.pieceStart)}, ${transpositionWords(w.transposition)}`));
  }
  if (r.worst.length) lines.push('worst re-scored windows:', ...r.worst.map((p) => `  ${p.rank}. ${describeWindow(p.window, s)}`));
  if (r.warnings.length || r.live?.length) lines.push(whyTheyDiffer(s));
  lines.push('', CAUTION);
  return lines.join('\n');
}

const sessionTable = (list: readonly SessionSummary[]): string => {
  const time = (iso: string | null): string => (iso ? iso.replace('T', ' ').replace(/\.\d+Z$|Z$/, '') : '—');
  const rows = [['id', 'start (UTC)', 'end (UTC)', 'corpus', 'preset', 'notes', 'warnings'], ...list.map((s) => [String(s.id), time(s.start), time(s.end), s.corpus, s.preset, String(s.notes), String(s.warnings)])];
  const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)));
  const numeric = new Set([0, 5, 6]);
  return rows.map((r) => r.map((cell, c) => (numeric.has(c) ? cell.padStart(widths[c]) : cell.padEnd(widths[c]))).join('  ').trimEnd()).join('\n');
};

interface ReviewFlags {
  log?: string;
  corpus?: string;
  html?: string;
  midi?: string;
  pairs?: string;
  baseline?: BaselineFile;
  worst: number;
  exact?: boolean;
  queue?: string;
  queueTimeout: number;
  minNotes: number;
  json?: boolean;
}

export function registerReview(cli: Command): void {
  cli
    .command('sessions')
    .description('list the sessions in the session log: id, start, end, corpus, preset, notes, warnings')
    .option('--log <file>', logOption)
    .option('--json', 'print JSON')
    .action((o: { log?: string; json?: boolean }) => {
      const file = o.log ?? defaultLogFile();
      if (!o.log && !existsSync(file)) {
        process.stderr.write(`earwitness: no session log at ${file} yet; the daemon writes it while you play\n`);
        if (o.json) printJson([]);
        return;
      }
      const list = withLog(file, (log) => log.listSessions());
      if (o.json) printJson(list);
      else process.stdout.write((list.length ? sessionTable(list) : `${file} holds no sessions yet`) + '\n');
    });

  cli
    .command('review')
    .description('re-score a logged session with the batch report’s windows; write it as HTML, MIDI or JSON')
    .argument('<session>', 'session id (see "earwitness sessions"), or "latest"')
    .option('--log <file>', logOption)
    .option('--corpus <path>', 'score against this corpus instead of the one the session logged')
    .option('--html <file>', 'write a self-contained HTML review')
    .option('--midi <file>', 'write the whole session as a Standard MIDI File')
    .option('--pairs <dir>', 'write each worst window and its corpus excerpt as pair-N-session.mid and pair-N-corpus.mid, and each live warning as warning-N-session.mid and warning-N-corpus.mid')
    .option('--baseline <file>', 'human baseline JSON (from "earwitness baseline --json") to draw beside the scores', readBaselineFile)
    .option('--worst <n>', 'how many worst windows to show and pair', wholeNumber('--worst'), DEFAULT_WORST)
    .option('--exact', 'match by brute force even where the corpus has an index (slow: the reference the index is checked against)')
    .addOption(minNotesOption())
    .addOption(queueOption())
    .addOption(queueTimeoutOption())
    .option('--json', 'print the review as JSON')
    .action(async (id: string, o: ReviewFlags) => {
      const file = o.log ?? defaultLogFile();
      const s = readSession(file, sessionId(id));
      const settings = sessionSettings(file, s.summary, o.minNotes);
      if (o.baseline) checkBaselineFits(o.baseline, settings);
      const opened = openSessionCorpus(s.summary, o.corpus, settings.pitch, matchesHere(o));
      const review = await buildReview(s, settings, opened, { ...o, corpus: o.corpus ?? s.summary.corpus, worst: o.worst, exact: o.exact ?? false });
      const protect = [file];
      const written: string[] = [];
      if (o.html) {
        writeOutputFile('--html', o.html, reviewHtml(review, o.baseline?.baseline ?? null), { protect });
        written.push(o.html);
      }
      if (o.midi) {
        writeOutputFile('--midi', o.midi, midiBytes(tracksByChannel(s.notes, (ch) => `channel ${ch}`), { title: `earwitness session ${review.id}`, bpm: settings.bpm }), { protect });
        written.push(o.midi);
      }
      if (o.pairs) written.push(...writePairs(o.pairs, review, protect));
      if (o.json) printJson(review);
      else process.stdout.write(reviewText(review) + '\n');
      for (const w of written) process.stderr.write(`earwitness: wrote ${w}\n`);
    });
}
