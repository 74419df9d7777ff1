/**
 * The headline: which corpus piece the playing is nearest, how far it is
 * transposed and where in the piece it sits — and, while a warning stands,
 * the same card grown into a filled banner with a warning shape and the
 * words "Close to: <title>", so it is seen from the corner of an eye.
 *
 * @example
 *   renderHeadline(elements, state);
 *   // warning standing → "Close to:" / "The Ninth Buoy" / "warned at 88% · 5 semitones up · from bar 3, beat 1"
 *   // a tempo-free match → "… · 5 semitones up · 1.5× as long (slower) · from bar 3, beat 1"
 *
 * Two figures can show at once: the meter's is the window just played
 * ("now"), the card's under a warning is the score the warning was raised at
 * ("warned at"); each says which it is.
 */
import { placedWords, tempoWords, transpositionWords } from '../../core/words.js';
import { type ViewState, percent, status } from './state.js';

export interface HeadlineElements {
  root: HTMLElement;
  lead: HTMLElement;
  title: HTMLElement;
  where: HTMLElement;
  dismiss: HTMLButtonElement;
}

interface Words {
  lead: string;
  title: string;
  where: string;
}

interface Placing {
  transposition: number;
  pieceStart: number;
  pieceBar?: number | null;
  pieceBeatInBar?: number | null;
  timeScale?: number | null;
}

/** "5 semitones up · 1.5× as long (slower) · from bar 3, beat 1": the match as the one vocabulary tells it (core/words.ts); the tempo only when it differs. */
const matchWords = (m: Placing, s: ViewState): string => {
  const tempo = m.timeScale == null ? null : tempoWords(m.timeScale);
  return `${transpositionWords(m.transposition, s.hello?.preset.pitch)}${tempo ? ` · ${tempo}` : ''} · from ${placedWords({ bar: m.pieceBar ?? null, beatInBar: m.pieceBeatInBar ?? null }, m.pieceStart)}`;
};

/** The three lines of the card for a state. */
export function headlineWords(s: ViewState): Words {
  const w = s.warning;
  if (w) return { lead: s.dismissed ? 'Dismissed — still close to:' : 'Close to:', title: w.title, where: `warned at ${percent(w.score)} · ${matchWords(w, s)}` };
  const sc = s.score;
  if (!sc) return { lead: '', title: status(s).state === 'waiting' ? 'Play something; nothing heard yet.' : '—', where: '' };
  if (sc.title === null || sc.transposition === null || sc.pieceStart === null) return { lead: 'Nearest:', title: 'nothing in the corpus', where: `${percent(sc.score)} now` };
  return { lead: 'Nearest:', title: sc.title, where: `${percent(sc.score)} now · ${matchWords({ ...sc, transposition: sc.transposition, pieceStart: sc.pieceStart }, s)}` };
}

export function renderHeadline(el: HeadlineElements, s: ViewState): void {
  const words = headlineWords(s);
  el.root.classList.toggle('warning', s.warning !== null);
  el.root.classList.toggle('dismissed', s.warning !== null && s.dismissed);
  el.lead.textContent = words.lead;
  el.title.textContent = words.title;
  el.where.textContent = words.where;
  el.dismiss.hidden = s.warning === null || s.dismissed;
}
