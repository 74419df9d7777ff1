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
import type { LoggedNote, LoggedWarning } from '../../formats/session-log.js';
import { beat, pct, signed } from '../report-text.js';
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
  /** As logged, with the seconds from the session's start. */
  warnings: (LoggedWarning & { elapsed: number | null })[];
  windows: WindowResult[];
  worst: ExcerptPair<LoggedNote>[];
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

const when = (iso: string): string => iso.replace('T', ' ').replace(/\.\d+Z$/, ' UTC').replace(/Z$/, ' UTC');

function warningTable(r: SessionReview): string {
  if (r.warnings.length === 0) return '<p class="empty">No warning was raised during this session.</p>';
  const rows = r.warnings.map((w, i) => {
    const cleared = w.clearedAt === null ? '—' : clock((w.clearedAt - w.raisedAt) / 1000) + ' later';
    return (
      `<tr><td class="num">${i + 1}</td><td class="num">${w.elapsed === null ? '—' : clock(w.elapsed)}</td><td class="num">${beat(w.startBeat)}</td>` +
      `<td><strong>${esc(w.title)}</strong><br><span class="where">${esc(w.piece)}</span></td><td class="num">${w.score.toFixed(3)}</td>` +
      `<td class="num">${signed(w.transposition)}</td><td class="num">beat ${beat(w.pieceStart)}</td><td class="num">${cleared}</td></tr>`
    );
  });
  return (
    '<table class="warnings"><thead><tr><th class="num">#</th><th class="num">time</th><th class="num">at beat</th><th>piece</th>' +
    '<th class="num">score</th><th class="num">transposition</th><th class="num">where in the piece</th><th class="num">cleared</th></tr></thead>' +
    `<tbody>${rows.join('')}</tbody></table>`
  );
}

export function reviewHtml(r: SessionReview, baseline: Baseline | null): string {
  const s = r.settings;
  const figures: Figure[] = [
    { label: 'notes', value: String(r.notes), note: `${beat(Math.round(r.beats * 100) / 100)} beats` },
    { label: 'windows', value: String(r.windows.length), note: `${s.window} beats, hop ${s.hop}` },
    { label: 'originality', value: pct(r.originality), note: '1 − mean window score' },
    { label: 'warnings', value: String(r.warnings.length), note: 'raised live' },
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
    warnings: r.warnings.map((w, i) => ({ beat: w.startBeat, title: `warning ${i + 1}: ${w.title}, score ${w.score.toFixed(3)}, transposed ${signed(w.transposition)}` })),
    picks: r.worst.map((p) => ({ rank: p.rank, start: p.window.start, end: p.window.end })),
  });
  const pairs = r.worst.length
    ? rollLegend() + r.worst.map((p) => pairFigure(p, { mode: s.pitch, queryLabel: 'Played' })).join('')
    : '<p class="empty">No window matched anything in the corpus.</p>';
  return page({
    title: `earwitness · session ${r.id} review`,
    heading: `Session ${r.id}`,
    lede: `Started ${when(r.start)}, preset “${r.preset}”, heard against the corpus ${r.corpus}; re-scored in ${scoringText(s, s.mode)}.`,
    figures,
    sections: [
      section('Window scores', timeline, 'Each window’s best cardinality score against the corpus: the share of notes one translation in time and pitch lands on a corpus passage. Hover a mark for the passage.'),
      section(`Warnings (${r.warnings.length})`, warningTable(r), 'As raised while playing. Time is from the session’s start; transposition is from the corpus passage to what was played.'),
      section('Worst windows', pairs, r.worst.length === 1 ? 'The highest-scoring window, beside the corpus passage it resembles, each at its own pitch.' : `The ${r.worst.length > 1 ? `${r.worst.length} ` : ''}highest-scoring windows that do not overlap, beside the corpus passage each resembles, each at its own pitch.`),
    ],
    footer: `earwitness session review · log session ${r.id} · corpus ${r.corpus} · ${scoringText(s, s.mode)}${baseline ? ` · baseline seed ${baseline.settings.seed}` : ''}`,
  });
}
