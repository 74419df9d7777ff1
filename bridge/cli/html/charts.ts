/**
 * Inline SVG charts: the timeline of window scores, a small sparkline of
 * the same for report tables, and originality as a series (one point per
 * folder, with its 95% interval). Every mark carries a <title>, so hovering
 * tells the numbers without any script; meaning is carried by shape and
 * line style as well as colour.
 *
 * @example
 *   scoreTimeline({ windows, beats: 96, threshold: 0.6, band: null, warnings: [], picks: [] })
 *   // → '<svg …>…</svg><ul class="legend">…</ul>'
 */
import type { WindowResult } from '../../../core/report.js';
import type { SeriesPoint } from '../../../core/review.js';
import type { PitchMode } from '../../../core/note.js';
import { type Meter, barBeat, beatOf } from '../../../core/bars.js';
import { placedWords, spanText, transpositionWords } from '../../../core/words.js';
import { pct } from '../report-text.js';
import { COLOUR, esc } from './page.js';

/** A horizontal band of values, e.g. the human baseline's typical window scores. */
export interface Band {
  lo: number;
  hi: number;
  /** Where the band comes from, shown in the legend. */
  label: string;
}

export interface TimelineMark {
  beat: number;
  title: string;
  /** The live score it was raised at: the mark sits on the live curve too. */
  score?: number;
}

/** A live scoring pass on the timeline, at the middle of its window. */
export interface TimelineLive {
  beat: number;
  score: number;
}

export interface TimelinePick {
  rank: number;
  start: number;
  end: number;
}

export interface TimelineInput {
  windows: readonly WindowResult[];
  /** Length of what was played, in beats. */
  beats: number;
  threshold: number | null;
  band: Band | null;
  /** Warnings raised live, at the middle of their window. */
  warnings: readonly TimelineMark[];
  /** The live scores as they were, when the session kept them. */
  live?: readonly TimelineLive[];
  /** The worst windows, numbered as in the excerpts below. */
  picks: readonly TimelinePick[];
  /** The bars the axis counts, and the pitch dimension transpositions are told in. */
  meter: Meter;
  pitch: PitchMode;
}

const r1 = (x: number): number => Math.round(x * 10) / 10;

/** Bar lines to label on an axis up to `until` beats: every bar, or every 2nd, 4th, 8th … so at most `most` show. */
export function barTicks(meter: Meter, until: number, most = 12): { beat: number; bar: number }[] {
  const first = barBeat(meter, 0)!.bar;
  const last = barBeat(meter, until)!.bar;
  let step = 1;
  while ((last - first) / step > most) step *= 2;
  const out: { beat: number; bar: number }[] = [];
  for (let bar = first + ((step - (first % step)) % step); bar <= last; bar += step) {
    const at = beatOf(meter, { bar, beatInBar: 1 });
    if (at >= 0 && at <= until + 1e-9) out.push({ beat: at, bar });
  }
  return out;
}

/** What a window's point says on hover: "bars 5:1–9:1: score 0.812, The Ninth Buoy from bar 3, beat 1, 5 semitones up, 12 of 14 notes". */
export function describeWindow(w: WindowResult, o: { meter: Meter; pitch: PitchMode }): string {
  const m = w.match;
  const where = m ? `${m.title} from ${placedWords(m, m.pieceStart)}, ${transpositionWords(m.transposition, o.pitch)}, ${m.matched} of ${Math.max(w.notes, m.excerptNotes)} notes` : 'no match';
  return `bars ${spanText(o.meter, w.start, w.end)}: score ${w.score.toFixed(3)}, ${where}`;
}

const swatch = (inner: string, width = 22): string => `<svg width="${width}" height="14" viewBox="0 0 ${width} 14" aria-hidden="true">${inner}</svg>`;
const legend = (items: readonly (readonly [string, string])[]): string =>
  `<ul class="legend">${items.map(([sw, text]) => `<li>${sw}${esc(text)}</li>`).join('')}</ul>`;

const diamond = (x: number, y: number, r: number): string => `${r1(x)},${r1(y - r)} ${r1(x + r)},${r1(y)} ${r1(x)},${r1(y + r)} ${r1(x - r)},${r1(y)}`;
const triangleDown = (x: number, y: number, r: number): string => `${r1(x - r)},${r1(y - r)} ${r1(x + r)},${r1(y - r)} ${r1(x)},${r1(y + r * 0.8)}`;

export function scoreTimeline(t: TimelineInput): string {
  const W = 960;
  const H = 300;
  // Above the plot, two rows: live warnings, then the numbers of the worst windows.
  const m = { l: 46, r: 18, t: 50, b: 40 };
  const warnRow = 12;
  const pickRow = 36;
  const last = t.windows.length ? t.windows[t.windows.length - 1].end : 0;
  const xMax = Math.max(t.beats, last, 1);
  const x = (b: number): number => m.l + (b / xMax) * (W - m.l - m.r);
  const y = (s: number): number => m.t + (1 - s) * (H - m.t - m.b);
  const parts: string[] = [];
  for (const s of [0, 0.25, 0.5, 0.75, 1]) {
    parts.push(`<line x1="${m.l}" x2="${W - m.r}" y1="${r1(y(s))}" y2="${r1(y(s))}" stroke="#000" stroke-opacity="${s === 0 ? 0.5 : 0.1}"/>`);
    parts.push(`<text x="${m.l - 8}" y="${r1(y(s) + 4)}" text-anchor="end">${s.toFixed(2)}</text>`);
  }
  for (const { beat: b, bar } of barTicks(t.meter, xMax)) {
    parts.push(`<line x1="${r1(x(b))}" x2="${r1(x(b))}" y1="${y(0)}" y2="${y(0) + 5}" stroke="#000" stroke-opacity="0.5"/>`);
    parts.push(`<text x="${r1(x(b))}" y="${y(0) + 19}" text-anchor="middle">${bar}</text>`);
  }
  parts.push(`<text x="${W - m.r}" y="${H - 4}" text-anchor="end" fill-opacity="0.7">bar</text>`);
  parts.push(`<text x="${m.l - 8}" y="${m.t - 8}" text-anchor="end" fill-opacity="0.7">score</text>`);
  if (t.band) {
    parts.push(
      `<rect x="${m.l}" width="${W - m.l - m.r}" y="${r1(y(t.band.hi))}" height="${r1(Math.max(1.5, y(t.band.lo) - y(t.band.hi)))}" fill="${COLOUR.baseline}" fill-opacity="0.22" stroke="${COLOUR.baseline}" stroke-opacity="0.6"><title>${esc(t.band.label)}</title></rect>`,
    );
  }
  for (const p of t.picks) {
    const x0 = x(p.start);
    const x1 = x(Math.min(p.end, xMax));
    parts.push(`<rect x="${r1(x0)}" width="${r1(Math.max(2, x1 - x0))}" y="${pickRow}" height="${y(0) - pickRow}" fill="${COLOUR.ink}" fill-opacity="0.07" stroke="#000" stroke-opacity="0.35"><title>worst window ${p.rank}: bars ${spanText(t.meter, p.start, p.end)}</title></rect>`);
    parts.push(`<circle cx="${r1((x0 + x1) / 2)}" cy="${pickRow}" r="9" fill="#000"/><text x="${r1((x0 + x1) / 2)}" y="${pickRow + 4}" text-anchor="middle" style="fill:#fff;font-weight:700">${p.rank}</text>`);
  }
  if (t.threshold !== null) {
    parts.push(`<line x1="${m.l}" x2="${W - m.r}" y1="${r1(y(t.threshold))}" y2="${r1(y(t.threshold))}" stroke="${COLOUR.threshold}" stroke-width="2" stroke-dasharray="6 4"/>`);
    parts.push(`<text x="${W - m.r}" y="${r1(y(t.threshold) - 5)}" text-anchor="end">warning threshold ${t.threshold.toFixed(2)}</text>`);
  }
  const pts = t.windows.map((w) => [x((w.start + w.end) / 2), y(w.score)] as const);
  if (pts.length > 1) parts.push(`<polyline points="${pts.map(([a, b]) => `${r1(a)},${r1(b)}`).join(' ')}" fill="none" stroke="${COLOUR.score}" stroke-width="2" stroke-linejoin="round"/>`);
  t.windows.forEach((w, i) => {
    const [px, py] = pts[i];
    const title = `<title>${esc(describeWindow(w, t))}</title>`;
    const hot = t.threshold !== null && w.score >= t.threshold;
    parts.push(hot
      ? `<polygon points="${diamond(px, py, 6)}" fill="${COLOUR.hot}" stroke="#000" stroke-width="1">${title}</polygon>`
      : `<circle cx="${r1(px)}" cy="${r1(py)}" r="3.5" fill="${COLOUR.score}" stroke="#fff" stroke-width="1">${title}</circle>`);
  });
  const live = t.live ?? [];
  if (live.length > 1) {
    // A step line: each live score held until the next pass, as the meter showed it.
    const steps = live.map((p, i) => `${r1(x(p.beat))},${r1(y(p.score))}${i + 1 < live.length ? ` ${r1(x(live[i + 1].beat))},${r1(y(p.score))}` : ''}`);
    parts.push(`<polyline points="${steps.join(' ')}" fill="none" stroke="${COLOUR.live}" stroke-width="1.5" stroke-dasharray="4 3"><title>live score as it was heard</title></polyline>`);
  }
  for (const wn of t.warnings) {
    parts.push(`<polygon points="${triangleDown(x(wn.beat), warnRow, 6)}" fill="${COLOUR.hot}" stroke="#000" stroke-width="1"><title>${esc(wn.title)}</title></polygon>`);
    if (wn.score !== undefined) parts.push(`<polygon points="${triangleDown(x(wn.beat), y(wn.score), 6)}" fill="${COLOUR.hot}" stroke="#000" stroke-width="1"><title>${esc(wn.title)}</title></polygon>`);
  }
  const svg = `<svg viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="window scores over the session">${parts.join('')}</svg>`;
  const items: [string, string][] = [
    [swatch(`<line x1="0" x2="22" y1="7" y2="7" stroke="${COLOUR.score}" stroke-width="2"/><circle cx="11" cy="7" r="3.5" fill="${COLOUR.score}"/>`), 'window score, at the middle of its window'],
  ];
  if (t.threshold !== null) {
    items.push([swatch(`<polygon points="${diamond(11, 7, 6)}" fill="${COLOUR.hot}" stroke="#000"/>`), 'window at or above the threshold']);
    items.push([swatch(`<line x1="0" x2="22" y1="7" y2="7" stroke="${COLOUR.threshold}" stroke-width="2" stroke-dasharray="6 4"/>`), 'warning threshold']);
  }
  if (live.length > 1) items.push([swatch(`<line x1="0" x2="22" y1="7" y2="7" stroke="${COLOUR.live}" stroke-width="1.5" stroke-dasharray="4 3"/>`), 'live score as it was heard, at the middle of its window']);
  if (t.warnings.length) items.push([swatch(`<polygon points="${triangleDown(11, 6, 6)}" fill="${COLOUR.hot}" stroke="#000"/>`), 'warning raised live']);
  if (t.band) items.push([swatch(`<rect x="1" y="2" width="20" height="10" fill="${COLOUR.baseline}" fill-opacity="0.22" stroke="${COLOUR.baseline}"/>`), t.band.label]);
  if (t.picks.length) items.push([swatch(`<rect x="1" y="1" width="20" height="12" fill="${COLOUR.ink}" fill-opacity="0.07" stroke="#000" stroke-opacity="0.35"/><circle cx="11" cy="7" r="4.5" fill="#000"/>`), 'worst window, numbered as below']);
  return svg + legend(items);
}

/** A small timeline of one query's window scores, for a table cell. */
export function sparkline(windows: readonly WindowResult[], beats: number, o: { meter: Meter; pitch: PitchMode }): string {
  const W = 220;
  const H = 34;
  if (windows.length === 0) return '<span class="empty">no windows</span>';
  const xMax = Math.max(beats, windows[windows.length - 1].end, 1);
  const x = (b: number): number => 2 + (b / xMax) * (W - 4);
  const y = (s: number): number => 2 + (1 - s) * (H - 4);
  const mid = (w: WindowResult): number => r1(x((w.start + w.end) / 2));
  const pts = windows.map((w) => `${mid(w)},${r1(y(w.score))}`);
  const worst = windows.reduce((a, b) => (b.score > a.score ? b : a));
  const area = `${mid(windows[0])},${y(0)} ${pts.join(' ')} ${mid(windows[windows.length - 1])},${y(0)}`;
  return (
    `<svg viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="window scores">` +
    `<line x1="0" x2="${W}" y1="${y(0)}" y2="${y(0)}" stroke="#000" stroke-opacity="0.3"/>` +
    `<polygon points="${area}" fill="${COLOUR.score}" fill-opacity="0.15"/>` +
    `<polyline points="${pts.join(' ')}" fill="none" stroke="${COLOUR.score}" stroke-width="1.5"/>` +
    `<polygon points="${diamond(x((worst.start + worst.end) / 2), y(worst.score), 4.5)}" fill="${COLOUR.hot}" stroke="#000" stroke-width="0.8"><title>${esc(`highest: ${describeWindow(worst, o)}`)}</title></polygon>` +
    `</svg>`
  );
}

/** Paths without the folder they all share: ['a/run/1', 'a/run/2'] → ['1', '2']. */
export function distinctTails(paths: readonly string[]): string[] {
  if (paths.length < 2) return [...paths];
  const split = paths.map((p) => p.split('/'));
  let shared = 0;
  while (split.every((parts) => parts.length > shared + 1 && parts[shared] === split[0][shared])) shared++;
  return split.map((parts) => parts.slice(shared).join('/'));
}

/**
 * Originality folder by folder: a point per folder with its 95% interval as
 * a whisker, joined in order, beside the human baseline's originality and
 * interval as a band.
 */
export function seriesChart(points: readonly SeriesPoint[], baseline: { originality: number | null; ci95: [number, number] | null } | null): string {
  const W = 960;
  const H = 320;
  // Folders named side by side share a parent (runs/ckpt-1, runs/ckpt-2): label them by what differs.
  const labels = distinctTails(points.map((p) => p.folder));
  const longest = Math.max(...labels.map((l) => l.length));
  const slanted = points.length > 6 || longest > 16;
  const m = { l: 56, r: 24, t: 34, b: slanted ? 96 : 48 };
  const step = (W - m.l - m.r) / points.length;
  const x = (i: number): number => m.l + step * (i + 0.5);
  const y = (o: number): number => m.t + (1 - o) * (H - m.t - m.b);
  const parts: string[] = [];
  for (const o of [0, 0.25, 0.5, 0.75, 1]) {
    parts.push(`<line x1="${m.l}" x2="${W - m.r}" y1="${r1(y(o))}" y2="${r1(y(o))}" stroke="#000" stroke-opacity="${o === 0 ? 0.5 : 0.1}"/>`);
    parts.push(`<text x="${m.l - 8}" y="${r1(y(o) + 4)}" text-anchor="end">${Math.round(o * 100)}%</text>`);
  }
  parts.push(`<text x="${m.l - 50}" y="${m.t - 20}" fill-opacity="0.7">originality</text>`);
  if (baseline?.ci95) {
    const [lo, hi] = baseline.ci95;
    parts.push(`<rect x="${m.l}" width="${W - m.l - m.r}" y="${r1(y(hi))}" height="${r1(Math.max(1.5, y(lo) - y(hi)))}" fill="${COLOUR.baseline}" fill-opacity="0.22"><title>human baseline 95% interval ${pct(lo)}–${pct(hi)}</title></rect>`);
  }
  if (baseline?.originality != null) {
    parts.push(`<line x1="${m.l}" x2="${W - m.r}" y1="${r1(y(baseline.originality))}" y2="${r1(y(baseline.originality))}" stroke="${COLOUR.baseline}" stroke-width="2" stroke-dasharray="8 4"/>`);
    parts.push(`<text x="${W - m.r - 4}" y="${r1(y(baseline.originality) - 6)}" text-anchor="end" style="fill:#000">human baseline ${pct(baseline.originality)}</text>`);
  }
  const known = points.map((p, i) => [i, p.originality] as const).filter((e): e is readonly [number, number] => e[1] !== null);
  if (known.length > 1) parts.push(`<polyline points="${known.map(([i, o]) => `${r1(x(i))},${r1(y(o))}`).join(' ')}" fill="none" stroke="${COLOUR.score}" stroke-width="2"/>`);
  points.forEach((p, i) => {
    const cx = r1(x(i));
    const label = labels[i].length > 28 ? `…${labels[i].slice(-27)}` : labels[i];
    parts.push(slanted
      ? `<text transform="translate(${cx},${y(0) + 14}) rotate(-35)" text-anchor="end"><title>${esc(p.folder)}</title>${esc(label)}</text>`
      : `<text x="${cx}" y="${y(0) + 18}" text-anchor="middle"><title>${esc(p.folder)}</title>${esc(label)}</text>`);
    if (p.originality === null) return;
    const tip = `${p.folder}: originality ${pct(p.originality)}${p.ci95 ? `, 95% interval ${pct(p.ci95[0])}–${pct(p.ci95[1])}` : ' (no interval: fewer than 2 queries with windows)'}, ${p.queries} queries, ${p.windows} windows`;
    if (p.ci95) {
      const [lo, hi] = p.ci95.map(y);
      parts.push(`<path d="M${cx},${r1(lo)}V${r1(hi)}M${cx - 7},${r1(lo)}h14M${cx - 7},${r1(hi)}h14" stroke="#000" stroke-width="1.5" fill="none"/>`);
    }
    parts.push(`<circle class="series-point" cx="${cx}" cy="${r1(y(p.originality))}" r="6" fill="${COLOUR.score}" stroke="#000" stroke-width="1"><title>${esc(tip)}</title></circle>`);
    parts.push(`<text x="${cx + 10}" y="${r1(y(p.originality) - 8)}" style="font-weight:600">${pct(p.originality)}</text>`);
  });
  const svg = `<svg viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="originality by folder">${parts.join('')}</svg>`;
  const items: [string, string][] = [
    [swatch(`<line x1="0" x2="22" y1="7" y2="7" stroke="${COLOUR.score}" stroke-width="2"/><circle cx="11" cy="7" r="5" fill="${COLOUR.score}" stroke="#000"/>`), 'originality of the folder'],
    [swatch(`<path d="M11,1V13M6,1h10M6,13h10" stroke="#000" stroke-width="1.5" fill="none"/>`), '95% bootstrap interval over its queries'],
  ];
  if (baseline?.originality != null) items.push([swatch(`<line x1="0" x2="22" y1="7" y2="7" stroke="${COLOUR.baseline}" stroke-width="2" stroke-dasharray="8 4"/>`), 'human baseline (corpus against itself)']);
  if (baseline?.ci95) items.push([swatch(`<rect x="1" y="2" width="20" height="10" fill="${COLOUR.baseline}" fill-opacity="0.22"/>`), 'its 95% interval']);
  return svg + legend(items);
}
