/**
 * Reading MusicXML scores (.musicxml, .xml, and compressed .mxl) into notes,
 * as MusicXML 4.0 defines them: parts read bar by bar (musicxml-part.ts),
 * repeats and numbered endings written out (repeats.ts), tied notes joined
 * into one sounding note, transposing parts at sounding pitch. A score is
 * one piece; each part plays on its own MIDI channel (the one its
 * `<midi-instrument>` names, else 1, 2, 3… in part order, passing over 10),
 * and a part on channel 10 is percussion, left out unless asked for.
 *
 * Spelling: MusicXML states every note's letter name, so a note's morphetic
 * pitch comes from the file (C4 = 60, one step per letter; a transposing
 * part's written letter moved by its `<diatonic>` steps), never from key
 * finding. The piece's key is its first key signature; key finding is used
 * only to name a key for a score with no `<key>`.
 *
 * @example
 *   readMusicXml(readFileSync('song.musicxml'), 'song.musicxml')
 *   // → { id: null, title: 'Harbour Lights', notes: [...], key: {...}, beats: 96, meters: [{ beat: 0, numerator: 3, denominator: 4 }] }
 */
import type { Note } from '../../core/note.js';
import { notesLength } from '../../core/corpus.js';
import { estimateKey, keyFromSignature } from '../../core/spelling.js';
import { type Bar, type BarNote, readPartBars } from './musicxml-part.js';
import { type BarRepeats, playOrder } from './repeats.js';
import { type ScorePiece, type TimeSignature, MAX_SCORE_NOTES, ScoreFileError, onGrid } from './score-piece.js';
import { type XmlElement, child, childText, children, xmlTree } from './xml-tree.js';

const PERCUSSION_CHANNEL = 10;
/** Most bars a score may come to with its repeats written out: a long score with its repeats is a few thousand. */
const MAX_PLAYED_BARS = 100_000;

/** XML bytes → text: UTF-16 when the bytes start with its byte order mark, else UTF-8 (what MusicXML files use). */
export function decodeXml(bytes: Uint8Array): string {
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return new TextDecoder('utf-16le').decode(bytes);
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return new TextDecoder('utf-16be').decode(bytes);
  return new TextDecoder('utf-8').decode(bytes);
}

/** A timewise score's bars of parts, turned into a partwise score's parts of bars. */
function partsOf(root: XmlElement): XmlElement[] {
  if (root.name === 'score-partwise') return children(root, 'part');
  const parts = new Map<string, XmlElement>();
  for (const measure of children(root, 'measure')) {
    for (const p of children(measure, 'part')) {
      const id = p.attrs.id ?? '';
      if (!parts.has(id)) parts.set(id, { name: 'part', attrs: p.attrs, children: [], text: '' });
      parts.get(id)!.children.push({ name: 'measure', attrs: measure.attrs, children: p.children, text: '' });
    }
  }
  return [...parts.values()];
}

/** Each part's channel: its `<midi-instrument>`'s, else the next free one in part order, passing over 10. */
function channels(root: XmlElement, parts: XmlElement[]): number[] {
  const stated = new Map<string, number>();
  for (const sp of children(child(root, 'part-list') ?? root, 'score-part')) {
    const c = Number(childText(child(sp, 'midi-instrument') ?? sp, 'midi-channel'));
    if (Number.isInteger(c) && c >= 1 && c <= 16) stated.set(sp.attrs.id ?? '', c);
  }
  let next = 0;
  const free = (): number => {
    next = (next % 16) + 1;
    return next === PERCUSSION_CHANNEL ? free() : next;
  };
  return parts.map((p) => stated.get(p.attrs.id ?? '') ?? free());
}

/** Repeat marks of all parts together (a mark in any part counts), and each bar's length: the longest any part reached. */
function mergeBars(parts: Bar[][]): { repeats: BarRepeats[]; beats: number[] } {
  const count = Math.max(0, ...parts.map((p) => p.length));
  const repeats: BarRepeats[] = [];
  const beats: number[] = [];
  for (let i = 0; i < count; i++) {
    const bars = parts.map((p) => p[i]).filter((b): b is Bar => !!b);
    repeats.push({ forward: bars.some((b) => b.repeats.forward), times: Math.max(...bars.map((b) => b.repeats.times)), endings: bars.find((b) => b.repeats.endings)?.repeats.endings ?? null });
    beats.push(Math.max(...bars.map((b) => b.beats)));
  }
  return { repeats, beats };
}

/** Joins each note tied from the one before it (same pitch, starting where that one ends) into that one. */
function joinTies(notes: (BarNote & { onset: number })[]): (BarNote & { onset: number })[] {
  notes.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  const open = new Map<number, BarNote & { onset: number }>();
  const out: (BarNote & { onset: number })[] = [];
  for (const n of notes) {
    const held = n.tie.stop ? open.get(n.pitch) : undefined;
    if (held && Math.abs(held.onset + held.duration - n.onset) < 1e-6) {
      held.duration = onGrid(held.duration + n.duration);
      if (!n.tie.start) open.delete(n.pitch);
      continue;
    }
    out.push(n);
    if (n.tie.start) open.set(n.pitch, n);
    else open.delete(n.pitch);
  }
  return out;
}

function title(root: XmlElement): string | null {
  const work = child(root, 'work');
  return (work && childText(work, 'work-title')) || childText(root, 'movement-title') || null;
}

/** Parses MusicXML bytes (not compressed) into a piece. Throws ScoreFileError naming `file` on anything unreadable. */
export function parseMusicXml(bytes: Uint8Array, file: string, options: { percussion?: boolean } = {}): ScorePiece {
  const root = xmlTree(decodeXml(bytes), file);
  if (root.name !== 'score-partwise' && root.name !== 'score-timewise') {
    throw new ScoreFileError(file, `is not MusicXML: its root element is <${root.name}>, where a MusicXML score has <score-partwise> or <score-timewise>`);
  }
  const parts = partsOf(root);
  const partChannels = channels(root, parts);
  const bars = parts.map((p) => readPartBars(p, file));
  const { repeats, beats } = mergeBars(bars);
  let order: number[];
  try {
    order = playOrder(repeats, MAX_PLAYED_BARS);
  } catch (e) {
    throw new ScoreFileError(file, (e as Error).message);
  }
  const starts: number[] = [];
  let at = 0;
  for (const i of order) {
    starts.push(at);
    at = onGrid(at + beats[i]);
  }
  const total = bars.reduce((sum, partBars) => sum + order.reduce((s, i) => s + (partBars[i]?.notes.length ?? 0), 0), 0);
  if (total > MAX_SCORE_NOTES) throw new ScoreFileError(file, `comes to more than ${MAX_SCORE_NOTES.toLocaleString('en')} notes with its repeats written out, the most earwitness reads from one score`);
  const notes: Note[] = [];
  bars.forEach((partBars, p) => {
    const channel = partChannels[p];
    if (channel === PERCUSSION_CHANNEL && !options.percussion) return;
    const played = order.flatMap((i, k) => (partBars[i]?.notes ?? []).map((n) => ({ ...n, onset: onGrid(starts[k] + n.at) })));
    for (const n of joinTies(played)) notes.push({ onset: n.onset, duration: n.duration, pitch: n.pitch, morph: n.morph, velocity: n.velocity, channel });
  });
  notes.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  const meters: TimeSignature[] = [];
  order.forEach((i, k) => {
    const m = bars[0]?.[i]?.meter;
    const last = meters[meters.length - 1];
    if (m && !(last && last.numerator === m.numerator && last.denominator === m.denominator)) meters.push({ beat: starts[k], ...m });
  });
  const firstKey = bars[0]?.find((b) => b.key)?.key;
  return {
    id: null,
    title: title(root),
    notes,
    key: firstKey ? keyFromSignature(firstKey.fifths, firstKey.minor) : estimateKey(notes),
    beats: notesLength(notes),
    meters,
  };
}
