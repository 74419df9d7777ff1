/** Reports as a person reads them: plain-text tables, and CSV for spreadsheets. */
import type { Baseline, MatchSummary, OriginalityReport } from '../../core/report.js';
import { pitchWords, placedWords, spanText, transpositionWords } from '../../core/words.js';

export const pct = (x: number | null): string => (x === null ? '—' : `${(100 * x).toFixed(1)}%`);
const ci = (c: [number, number] | null): string => (c ? `95% CI ${pct(c[0])}–${pct(c[1])}` : 'no interval (needs 2 or more queries)');

/** The time scale (tempo-free matches) and distinctiveness of a match, when it carries them. */
const beyondExact = (m: MatchSummary): string =>
  (m.timeScale === undefined ? '' : `, time scale ${m.timeScale.toFixed(2)}`) + (m.distinctiveness === undefined ? '' : `, distinctiveness ${m.distinctiveness.toFixed(2)}`);

export function reportText(r: OriginalityReport): string {
  const short = r.tooShort ? `; ${r.tooShort} window${r.tooShort === 1 ? '' : 's'} of fewer than ${r.settings.minNotes} notes too short to judge` : '';
  const lines = [`originality ${pct(r.originality)} over ${r.windows} windows of ${r.settings.window} beats (hop ${r.settings.hop}, ${pitchWords(r.settings.pitch)} pitch); ${ci(r.ci95)}${short}`, ''];
  for (const q of r.queries) {
    lines.push(`${q.file}: ${q.notes} notes, originality ${pct(q.originality)}`);
    for (const w of q.windows) {
      const m = w.match;
      const where = m ? `${m.title} from ${placedWords(m, m.pieceStart)}, ${transpositionWords(m.transposition, r.settings.pitch)}, ${m.matched} notes matched${beyondExact(m)}` : 'no match';
      lines.push(`  ${spanText(q.meter, w.start, w.end).padEnd(11)} ${String(w.notes).padStart(3)} notes  score ${w.score.toFixed(3)}  ${where}${w.tooShort ? ' (too short to judge: left out)' : ''}`);
    }
    lines.push('');
  }
  lines.push(r.caution);
  return lines.join('\n');
}

const csvCell = (v: string | number): string => (typeof v === 'number' ? String(v) : /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);

export function reportCsv(r: OriginalityReport): string {
  const rows = [['file', 'start', 'end', 'bar', 'beat_in_bar', 'notes', 'score', 'piece', 'title', 'piece_start', 'piece_bar', 'piece_beat_in_bar', 'transposition', 'matched', 'time_scale', 'distinctiveness', 'too_short']];
  for (const q of r.queries) {
    for (const w of q.windows) {
      const m = w.match;
      rows.push([q.file, w.start, w.end, w.bar ?? '', w.beatInBar ?? '', w.notes, w.score, m?.piece ?? '', m?.title ?? '', m?.pieceStart ?? '', m?.bar ?? '', m?.beatInBar ?? '', m?.transposition ?? '', m?.matched ?? '', m?.timeScale ?? '', m?.distinctiveness ?? '', String(w.tooShort)].map((v) => csvCell(v as string | number)));
    }
  }
  return rows.map((r) => r.join(',')).join('\n') + '\n';
}

export function baselineText(b: Baseline): string {
  const p = b.percentiles;
  return [
    `human baseline: originality ${pct(b.originality)}, ${ci(b.ci95)}`,
    `${b.samples.length} pieces sampled (seed ${b.settings.seed}), ${b.windows} windows of ${b.settings.window} beats (hop ${b.settings.hop}), each scored against the rest of the corpus`,
    `window scores: p50 ${p.p50.toFixed(3)}  p90 ${p.p90.toFixed(3)}  p95 ${p.p95.toFixed(3)}  p99 ${p.p99.toFixed(3)}`,
    '',
    b.caution,
  ].join('\n');
}
