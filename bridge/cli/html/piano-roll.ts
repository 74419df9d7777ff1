/**
 * Piano rolls of a worst-window pair: the played excerpt and the corpus
 * excerpt side by side, each at its own pitch, drawn to the same scale so
 * the shared shape shows. Matched notes are filled and outlined solid,
 * the others hollow with a dashed outline, so the marking survives without
 * colour (and in print).
 *
 * @example
 *   pairFigure(pair, { mode: 'chromatic', queryLabel: 'Played' })
 *   // → '<div class="pair">…two <svg> piano rolls…</div>'
 */
import type { Note, PitchMode } from '../../../core/note.js';
import type { ExcerptPair, MarkedNote } from '../../../core/review.js';
import { type Meter, barBeat } from '../../../core/bars.js';
import { barBeatText, beatsWords, positionWords, spanText, transpositionWords } from '../../../core/words.js';
import { COLOUR, esc } from './page.js';

const NAMES = ['C', 'C#', 'D', 'D#', 'E', 'F', 'F#', 'G', 'G#', 'A', 'A#', 'B'];
const BLACK = new Set([1, 3, 6, 8, 10]);
/** Scientific pitch name, C4 = MIDI 60 (MIDI 1.0). */
export const noteName = (pitch: number): string => `${NAMES[((pitch % 12) + 12) % 12]}${Math.floor(pitch / 12) - 1}`;

const r1 = (x: number): number => Math.round(x * 10) / 10;

export interface RollInput {
  notes: readonly MarkedNote<Note>[];
  /** First beat shown. */
  from: number;
  beats: number;
  /** The bars the axis is labelled in. */
  meter: Meter;
  /** Lowest and highest MIDI note shown. */
  low: number;
  high: number;
  label: string;
}

const MATCHED = `fill="${COLOUR.matched}" stroke="#000" stroke-width="1.5"`;
const OTHER = `fill="#fff" stroke="${COLOUR.unmatched}" stroke-width="1.3" stroke-dasharray="3 2"`;

export function pianoRoll(r: RollInput): string {
  const W = 470;
  const m = { l: 36, r: 6, t: 6, b: 24 };
  const rows = r.high - r.low + 1;
  const rowH = Math.min(14, Math.max(5, Math.round(230 / rows)));
  const H = m.t + rows * rowH + m.b;
  const plotW = W - m.l - m.r;
  const x = (b: number): number => m.l + ((b - r.from) / r.beats) * plotW;
  const y = (p: number): number => m.t + (r.high - p) * rowH;
  const parts: string[] = [];
  for (let p = r.low; p <= r.high; p++) {
    if (BLACK.has(((p % 12) + 12) % 12)) parts.push(`<rect x="${m.l}" y="${y(p)}" width="${plotW}" height="${rowH}" fill="#000" fill-opacity="0.055"/>`);
    if (p % 12 === 0) {
      parts.push(`<line x1="${m.l}" x2="${W - m.r}" y1="${y(p) + rowH}" y2="${y(p) + rowH}" stroke="#000" stroke-opacity="0.25"/>`);
      parts.push(`<text x="${m.l - 5}" y="${r1(y(p) + rowH / 2 + 4)}" text-anchor="end" style="font-size:11px">${noteName(p)}</text>`);
    }
  }
  for (let k = 0; k <= r.beats; k++) {
    const strong = barBeat(r.meter, r.from + k)?.beatInBar === 1;
    parts.push(`<line x1="${r1(x(r.from + k))}" x2="${r1(x(r.from + k))}" y1="${m.t}" y2="${m.t + rows * rowH}" stroke="#000" stroke-opacity="${strong ? 0.22 : 0.07}"/>`);
    const anchor = k === 0 ? 'start' : k + 2 > r.beats ? 'end' : 'middle';
    if (strong || k === 0) parts.push(`<text x="${r1(x(r.from + k))}" y="${H - 8}" text-anchor="${anchor}" style="font-size:11px">${barBeatText(r.meter, r.from + k)}</text>`);
  }
  parts.push(`<rect x="${m.l}" y="${m.t}" width="${plotW}" height="${rows * rowH}" fill="none" stroke="#000" stroke-opacity="0.45"/>`);
  // Unmatched first, so a matched note is never hidden under another.
  const ordered = [...r.notes].sort((a, b) => Number(a.matched) - Number(b.matched));
  for (const n of ordered) {
    const x0 = x(n.onset);
    const x1 = Math.min(x(n.onset + n.duration), W - m.r);
    const title = `${noteName(n.pitch)} (${n.pitch}) at ${positionWords(r.meter, n.onset)}, ${beatsWords(n.duration)}, ${n.matched ? 'matched' : 'not matched'}`;
    parts.push(`<rect x="${r1(x0)}" y="${r1(y(n.pitch) + 1)}" width="${r1(Math.max(3, x1 - x0))}" height="${Math.max(3, rowH - 2)}" rx="2" ${n.matched ? MATCHED : OTHER}><title>${esc(title)}</title></rect>`);
  }
  return `<svg viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="${esc(r.label)}">${parts.join('')}</svg>`;
}

/** Legend of the note marking, for the section holding the pairs. */
export const rollLegend = (): string =>
  '<ul class="legend">' +
  `<li><svg width="26" height="12" aria-hidden="true"><rect x="1" y="1" width="24" height="10" rx="2" ${MATCHED}/></svg>matched: the translation lands it on a note of the other excerpt</li>` +
  `<li><svg width="26" height="12" aria-hidden="true"><rect x="1" y="1" width="24" height="10" rx="2" ${OTHER}/></svg>not matched</li>` +
  '</ul>';

/** Shared vertical scale: both rolls get the same number of rows, each centred on its own notes. */
function pitchSpans(a: readonly Note[], b: readonly Note[]): [[number, number], [number, number]] {
  const range = (ns: readonly Note[]): [number, number] => (ns.length ? [Math.min(...ns.map((n) => n.pitch)), Math.max(...ns.map((n) => n.pitch))] : [60, 72]);
  const ra = range(a);
  const rb = range(b);
  const rows = Math.max(12, ra[1] - ra[0], rb[1] - rb[0]) + 4;
  const centre = ([lo, hi]: [number, number]): [number, number] => {
    const low = Math.max(0, lo - Math.floor((rows - (hi - lo)) / 2));
    return [low, Math.min(127, low + rows)];
  };
  return [centre(ra), centre(rb)];
}

/** `id`: the figure's anchor, `worst` (the default) for a worst window, `warning` for a live warning; numbered by the pair's rank. */
export function pairFigure(pair: ExcerptPair, o: { mode: PitchMode; queryLabel: string; id?: 'worst' | 'warning' }): string {
  const w = pair.window;
  const mt = w.match;
  const beats = w.end - w.start;
  // A tempo-free match found the passage at another speed: its excerpt spans the window divided by that scale.
  const scale = mt.timeScale ?? 1;
  const pieceBeats = beats / scale;
  const played = spanText(pair.queryMeter, w.start, w.end);
  const inPiece = spanText(pair.pieceMeter, mt.pieceStart, mt.pieceStart + pieceBeats);
  const [qs, cs] = pitchSpans(pair.query, pair.corpus);
  const count = (ns: readonly MarkedNote<Note>[]): string => `${ns.filter((n) => n.matched).length} of ${ns.length} notes matched`;
  const transposed = transpositionWords(mt.transposition, o.mode) + (scale === 1 ? '' : `, ${scale}× as long`);
  return (
    `<div class="pair" id="${o.id ?? 'worst'}-${pair.rank}">` +
    `<h3><span class="rank">${pair.rank}</span>score ${w.score.toFixed(3)}: bars ${played} resemble “${esc(mt.title)}” bars ${inPiece}, ${transposed}</h3>` +
    '<div class="rolls">' +
    `<figure style="margin:0"><h4>${esc(o.queryLabel)}, bars ${played}</h4><p class="where">${count(pair.query)}</p>` +
    pianoRoll({ notes: pair.query, from: w.start, beats, low: qs[0], high: qs[1], meter: pair.queryMeter, label: `${o.queryLabel} excerpt` }) +
    '</figure>' +
    `<figure style="margin:0"><h4>${esc(mt.title)}, bars ${inPiece}</h4><p class="where">${esc(mt.piece)} · ${count(pair.corpus)}</p>` +
    pianoRoll({ notes: pair.corpus, from: mt.pieceStart, beats: pieceBeats, low: cs[0], high: cs[1], meter: pair.pieceMeter, label: `corpus excerpt from ${mt.title}` }) +
    '</figure></div></div>'
  );
}
