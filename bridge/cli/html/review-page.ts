/**
 * The review of one logged session as a page: summary figures, the
 * timeline of window scores (with the human baseline band when one is
 * given), the warnings raised live, and the worst windows as piano-roll
 * pairs. `SessionReview` is also what `review --json` prints.
 *
 * @example
 *   writeFileSync('review.html', reviewHtml(review, baseline));
 */
import type { PitchMode } from '../../../core/note.js';
import type { MatchMode } from '../../../core/pipeline.js';
import type { Baseline, WindowResult } from '../../../core/report.js';
import type { ExcerptPair } from '../../../core/review.js';
import type { HeardPass } from '../../../core/live-review.js';
import type { LoggedNote, LoggedWarning } from '../../formats/session-log.js';
import type { TimeSignature } from '../../../core/bars.js';
import { SCORING_PASS, SCORING_PASSES, barBeatText, beatsWords, placedText, positionWords, transpositionWords } from '../../../core/words.js';
import { pct } from '../report-text.js';
import { scoreTimeline } from './charts.js';
import { type Figure, esc, page, scoringText, section } from './page.js';
import { pairFigure, rollLegend } from './piano-roll.js';

export interface ReviewSettings {
  window: number;
  hop: number;
  pitch: PitchMode;
  mode: MatchMode;
  /** The live warning threshold, when the session logged one. */
  threshold: number | null;
  /** Tempo the session's beats were played at, for the MIDI file. */
  bpm: number;
  /** Divisions per beat the live scorer snapped onsets to (0 = as played); the review snaps the same. */
  grid: number;
  /** Windows with fewer notes are too short to judge. */
  minNotes: number;
  /** The session's time signatures: its bars and beats. */
  meter: TimeSignature[];
  /** Whether the daemon kept every live score in the log (older logs did not). */
  liveScores: boolean;
}

export interface SessionReview {
  id: number;
  start: string;
  end: string | null;
  corpus: string;
  preset: string;
  settings: ReviewSettings;
  notes: number;
  /** Length in beats: the end of the last note. */
  beats: number;
  /** Wall-clock length; for a session that never ended, up to its last note. */
  seconds: number | null;
  originality: number | null;
  /** As logged, placed in the session's bars and the piece's, with the seconds from the session's start. */
  warnings: (LoggedWarning & { bar: number | null; beatInBar: number | null; pieceBar: number | null; pieceBeatInBar: number | null; elapsed: number | null })[];
  /** Every live scoring pass, as the performer saw it; null for a session logged before live scores were kept. */
  live: HeardPass[] | null;
  windows: WindowResult[];
  worst: ExcerptPair<LoggedNote>[];
  /** Each live warning's excerpts, numbered as the warnings are. */
  warned: ExcerptPair<LoggedNote>[];
  caution: string;
}

/** Seconds → "m:ss" (or "h:mm:ss"). */
export function clock(seconds: number): string {
  const s = Math.max(0, Math.round(seconds));
  const h = Math.floor(s / 3600);
  const mm = Math.floor((s % 3600) / 60);
  const ss = String(s % 60).padStart(2, '0');
  return h ? `${h}:${String(mm).padStart(2, '0')}:${ss}` : `${mm}:${ss}`;
}

/** One sentence: why the live scores and the re-scored windows differ. */
export function whyTheyDiffer(s: Pick<ReviewSettings, 'window' | 'hop'>): string {
  return `Live, each ${SCORING_PASS} scored the last ${s.window} beats as every note arrived; here fixed ${s.window}-beat windows start every ${s.hop} beats, so a quote that straddles two of them scores lower in each than it did live, and a live warning can fall between them.`;
}

const when = (iso: string): string => iso.replace('T', ' ').replace(/\.\d+Z$/, ' UTC').replace(/Z$/, ' UTC');

function warningTable(r: SessionReview): string {
  if (r.warnings.length === 0) return '<p class="empty">No warning was raised during this session.</p>';
  const rows = r.warnings.map((w, i) => {
    const cleared = w.clearedAt === null ? '—' : clock((w.clearedAt - w.raisedAt) / 1000) + ' later';
    return (
      `<tr><td class="num">${i + 1}</td><td class="num">${w.elapsed === null ? '—' : clock(w.elapsed)}</td><td class="num">${barBeatText(r.settings.meter, w.startBeat)}</td>` +
      `<td><strong>${esc(w.title)}</strong><br><span class="where">${esc(w.piece)}</span></td><td class="num">${w.score.toFixed(3)}</td>` +
      `<td>${transpositionWords(w.transposition, r.settings.pitch)}</td><td class="num">${placedText({ bar: w.pieceBar, beatInBar: w.pieceBeatInBar }, w.pieceStart)}</td><td class="num">${cleared}</td></tr>`
    );
  });
  return (
    '<table class="warnings"><thead><tr><th class="num">#</th><th class="num">time</th><th class="num">at bar:beat</th><th>piece</th>' +
    '<th class="num">score</th><th>transposition</th><th class="num">where in the piece (bar:beat)</th><th class="num">cleared</th></tr></thead>' +
    `<tbody>${rows.join('')}</tbody></table>`
  );
}

export function reviewHtml(r: SessionReview, baseline: Baseline | null): string {
  const s = r.settings;
  const figures: Figure[] = [
    { label: 'notes', value: String(r.notes), note: beatsWords(r.beats) },
    { label: 'windows', value: String(r.windows.length), note: `${s.window} beats, hop ${s.hop}` },
    { label: 'originality', value: pct(r.originality), note: '1 − mean window score' },
    { label: 'warnings', value: String(r.warnings.length), note: r.live === null ? 'raised live (no live scores in the log)' : `raised live, in ${r.live.length} ${SCORING_PASSES}` },
    { label: 'duration', value: r.seconds === null ? '—' : clock(r.seconds), note: r.end ? `at ${s.bpm} bpm` : 'not ended cleanly: up to the last note' },
  ];
  if (baseline) figures.push({ label: 'human baseline', value: pct(baseline.originality), note: baseline.ci95 ? `95% CI ${pct(baseline.ci95[0])}–${pct(baseline.ci95[1])}` : `${baseline.samples.length} pieces` });
  const band = baseline
    ? { lo: baseline.percentiles.p50, hi: baseline.percentiles.p95, label: `human baseline: median to 95th percentile of corpus window scores (${baseline.samples.length} pieces against the rest)` }
    : null;
  const timeline = scoreTimeline({
    windows: r.windows,
    beats: r.beats,
    threshold: s.threshold,
    band,
    warnings: r.warnings.map((w, i) => ({ beat: w.startBeat + s.window / 2, score: r.live?.length ? w.score : undefined, title: `warning ${i + 1} at ${positionWords(s.meter, w.startBeat, 'the session')}: ${w.title}, score ${w.score.toFixed(3)}, ${transpositionWords(w.transposition, s.pitch)}` })),
    picks: r.worst.map((p) => ({ rank: p.rank, start: p.window.start, end: p.window.end })),
    live: (r.live ?? []).map((p) => ({ beat: p.beat + s.window / 2, score: p.score })),
    meter: s.meter,
    pitch: s.pitch,
  });
  const heard = r.live === null
    ? 'This session was logged before live scores were kept, so only its warnings show what was heard live. '
    : `The dashed line is the live score of each of the ${r.live.length} ${SCORING_PASSES}, as the performer saw it. `;
  const warned = r.warned.length
    ? rollLegend() + r.warned.map((p) => pairFigure(p, { mode: 'chromatic', queryLabel: `Played (warning ${p.rank})`, id: 'warning' })).join('')
    : '<p class="empty">No warning was raised during this session.</p>';
  const pairs = r.worst.length
    ? rollLegend() + r.worst.map((p) => pairFigure(p, { mode: s.pitch, queryLabel: 'Played' })).join('')
    : '<p class="empty">No window matched anything in the corpus.</p>';
  return page({
    title: `earwitness · session ${r.id} review`,
    heading: `Session ${r.id}`,
    lede: `Started ${when(r.start)}, preset “${r.preset}”, heard against the corpus ${r.corpus}; re-scored in ${scoringText(s, s.mode)}.`,
    figures,
    sections: [
      section('Window scores', timeline, `${heard}The solid line re-scores fixed windows: each window’s best cardinality score against the corpus, the share of notes one translation in time and pitch lands on a corpus passage. ${esc(whyTheyDiffer(s))} Hover a mark for the passage.`),
      section(`Warnings (${r.warnings.length})`, warningTable(r), 'As raised while playing. Time is from the session’s start; transposition is from the corpus passage to what was played.'),
      section('Warnings as heard', warned, 'Each live warning: what had been played of the warned window when it was raised, beside the corpus passage it named, each at its own pitch.'),
      section('Worst windows', pairs, r.worst.length === 1 ? 'The highest-scoring window, beside the corpus passage it resembles, each at its own pitch.' : `The ${r.worst.length > 1 ? `${r.worst.length} ` : ''}highest-scoring windows that do not overlap, beside the corpus passage each resembles, each at its own pitch.`),
    ],
    footer: `earwitness session review · log session ${r.id} · corpus ${r.corpus} · ${scoringText(s, s.mode)}${baseline ? ` · baseline seed ${baseline.settings.seed}` : ''}`,
  });
}
