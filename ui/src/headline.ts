/**
 * The headline: which corpus piece the playing is nearest, how far it is
 * transposed and where in the piece it sits — and, while a warning stands,
 * the same card grown into a filled banner with a warning shape and the
 * words "Close to: <title>", so it is seen from the corner of an eye.
 *
 * @example
 *   renderHeadline(elements, state);
 *   // warning standing → "Close to:" / "The Ninth Buoy" / "88% · +5 semitones · at beat 8"
 */
import { type ViewState, beatWords, percent, status, transpositionWords } from './state.js';

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

const whereWords = (score: number, transposition: number, pieceStart: number, s: ViewState): string =>
  `${percent(score)} · ${transpositionWords(transposition, s.hello?.preset.pitch)} · at beat ${beatWords(pieceStart)}`;

/** The three lines of the card for a state. */
export function headlineWords(s: ViewState): Words {
  const w = s.warning;
  if (w) return { lead: s.dismissed ? 'Dismissed — still close to:' : 'Close to:', title: w.title, where: whereWords(w.score, w.transposition, w.pieceStart, s) };
  const sc = s.score;
  if (!sc) return { lead: '', title: status(s).state === 'waiting' ? 'Play something; nothing heard yet.' : '—', where: '' };
  if (sc.title === null || sc.transposition === null || sc.pieceStart === null) return { lead: 'Nearest:', title: 'nothing in the corpus', where: percent(sc.score) };
  return { lead: 'Nearest:', title: sc.title, where: whereWords(sc.score, sc.transposition, sc.pieceStart, s) };
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
