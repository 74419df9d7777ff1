/**
 * Reading ABC tune books (.abc) into notes, through abcjs: each tune (from
 * its X: line to the next blank line) is a piece, with its X: number as its
 * id and its T: title. abcjs reads the notation (ABC 2.1) and writes out
 * the performance (repeats, first and second endings, tuplets, broken
 * rhythm, ties, chords, voices, key and metre changes); each voice plays on
 * its own MIDI channel. Timing is abcjs's, in whole notes, turned into
 * quarter-note beats. Left out: grace notes (taken off before abcjs plays
 * the tune, so the note they ornament keeps its written time, as abc2midi
 * -NGRA plays it), and the accompaniment abcjs would make up from chord
 * symbols and %%MIDI drum lines (it is not written in the tune).
 *
 * Spelling: ABC writes every note by letter name, so a note's morphetic
 * pitch comes from the letter abcjs read (C4 = 60, one step per letter),
 * moved by whole octaves when the sounding pitch is octaves away from the
 * written one (clef=treble-8, octave=). A tune transposed by another
 * interval (transpose=, %%MIDI transpose) sounds at pitches its letters do
 * not name: that tune alone is spelled by key finding, as MIDI files are.
 * The piece's key is the K: field's signature (a modal key keeps its
 * signature, named as the major or minor key that has it).
 *
 * @example
 *   parseAbc('X:1\nT:Gull Point\nK:D\nDEF|\n', 'book.abc').pieces[0]
 *   // → { id: '1', title: 'Gull Point', notes: [{ onset: 0, duration: 0.5, pitch: 62, morph: 61, … }, …], key: { tonic: 'D', … }, … }
 */
import { createRequire } from 'node:module';
import type { Note } from '../../core/note.js';
import { notesLength } from '../../core/corpus.js';
import { type Key, estimateKey, keyFromSignature, spellNotes } from '../../core/spelling.js';
import { type ScoreFile, type ScorePiece, type SkippedPiece, type TimeSignature, MAX_SCORE_NOTES, ScoreFileError, onGrid } from './score-piece.js';

/** abcjs, loaded the first time an ABC file is read: most commands never read one, and loading it takes a tenth of a second. */
let loaded: typeof import('abcjs') | null = null;
const abcjs = (): typeof import('abcjs') => (loaded ??= createRequire(import.meta.url)('abcjs') as typeof import('abcjs'));

/** The parts of abcjs's parsed tune this reader uses. */
interface AbcPitch {
  /** Letter steps from middle C (C = 0, c = 7, C, = −7). */
  pitch: number;
}
interface AbcElement {
  el_type: string;
  startChar?: number;
  pitches?: (AbcPitch | null)[];
  gracenotes?: unknown;
  duration?: number;
  decoration?: string[];
  midiPitches?: { pitch: number }[];
  currentTrackWholeNotes?: number | number[];
  type?: string;
  value?: { num: string; den: string }[];
  cmd?: string;
  params?: unknown[];
  rest?: { type: string; text?: number };
  startEnding?: string;
}
interface AbcKey {
  accidentals?: { acc: string; note?: string }[];
}
interface AbcStaff {
  meter?: AbcElement;
  key?: AbcKey & { root: string; mode: string };
  clef?: { transpose?: number };
  voices?: AbcElement[][];
}
interface AbcEvent {
  cmd: string;
  pitch: number;
  volume: number;
  start: number;
  duration: number;
  startChar?: number;
  channel?: number;
}
interface AbcTune {
  lines: { staff?: AbcStaff[] }[];
  metaText: { title?: string };
  formatting: { midi?: { transpose?: unknown[] } };
  setUpAudio(options: Record<string, unknown>): { tracks: AbcEvent[][] };
}

const PERCUSSION_CHANNEL = 10;
/** Most bars of rest (Z, a rest of several bars) one tune may hold: abcjs lays out every bar of it, and a billion would end the process. */
const MAX_REST_BARS = 10_000;
/** Longest a tune may be as written, in whole notes (100,000 is 400,000 beats, a day and a half at 180 a minute): abcjs lays out time in steps, and a note of 10^16 whole notes would end the process. */
const MAX_WHOLE_NOTES = 100_000;
/** Longest a tune's trilled notes may be in all, in whole notes: abcjs writes a trill out as 32nd notes, 32 a whole note, slowly (a trill of 60,000 whole notes took 85 s). */
const MAX_TRILLED_WHOLE_NOTES = 1_000;
/** Highest ending number ([1, [2 … ): abcjs steps through every number up to the highest, so [99999900 would take minutes. */
const MAX_ENDING = 64;
/** Largest numerator and denominator of a time signature (a denominator is at least 1): abcjs lays out every beat of a bar, and a hundred million would end the process. */
const MAX_METER = 256;

/** What is wrong with one tune of a file (the file's other tunes may be fine). */
class TuneError extends Error {}
const NATURAL = [0, 2, 4, 5, 7, 9, 11];
const MINOR_MODES = /^(m|min|minor|aeo|dor|phr|loc)/i;

/** abcjs's times are whole notes, rounded to 6 decimals: as beats, back on the grain grid. */
const beats = (wholeNotes: number): number => onGrid(wholeNotes * 4);

/**
 * Morphetic pitch of a note written `step` letters from middle C that sounds
 * as MIDI `pitch`: the written letter, moved by whole octaves to where it
 * sounds, or null when no accidental (up to a double sharp or flat) can
 * make that letter sound so.
 */
export function writtenMorph(step: number, pitch: number): number | null {
  const natural = 60 + 12 * Math.floor(step / 7) + NATURAL[((step % 7) + 7) % 7];
  const octaves = Math.round((pitch - natural) / 12);
  return Math.abs(pitch - natural - 12 * octaves) <= 2 ? 60 + step + 7 * octaves : null;
}

/**
 * Whether the tune sounds at another pitch than its letters say by more than
 * whole octaves: transpose= on K: or V: (abcjs keeps it on the clef), or
 * %%MIDI transpose in the header or the body.
 */
function transposed(tune: AbcTune): boolean {
  const shifts = [
    ...tune.lines.flatMap((l) => (l.staff ?? []).map((s) => s.clef?.transpose ?? 0)),
    ...(tune.formatting.midi?.transpose ?? []),
    ...elements(tune).filter((e) => e.el_type === 'midi' && e.cmd === 'transpose').map((e) => e.params?.[0]),
  ];
  return shifts.some((t) => Number(t) % 12 !== 0);
}

function elements(tune: AbcTune): AbcElement[] {
  return tune.lines.flatMap((l) => (l.staff ?? []).flatMap((s) => (s.voices ?? []).flat()));
}

/** The tune's first K: key, as a key signature. */
function keyOf(tune: AbcTune): Key | null {
  const k = tune.lines.flatMap((l) => l.staff ?? []).find((s) => s.key)?.key;
  if (!k || !/^[A-G]$/.test(k.root)) return null;
  const fifths = (k.accidentals ?? []).reduce((s, a) => s + (a.acc === 'sharp' ? 1 : a.acc === 'flat' ? -1 : 0), 0);
  return keyFromSignature(Math.max(-7, Math.min(7, fifths)), MINOR_MODES.test(k.mode));
}

const meterOf = (m: AbcElement): { numerator: number; denominator: number } | null => {
  if (m.type === 'common_time') return { numerator: 4, denominator: 4 };
  if (m.type === 'cut_time') return { numerator: 2, denominator: 2 };
  const v = m.value?.[0];
  const numerator = (v?.num ?? '').split('+').reduce((s, x) => s + Number(x), 0);
  const denominator = Number(v?.den);
  return numerator > 0 && denominator > 0 ? { numerator, denominator } : null;
};

/** Time signatures of the first voice, each placed at every time the music reaches the note after it. */
function metersOf(tune: AbcTune): TimeSignature[] {
  const found: TimeSignature[] = [];
  let pending: { numerator: number; denominator: number } | null = null;
  for (const line of tune.lines) {
    const staff = line.staff?.[0];
    if (staff?.meter) pending = meterOf(staff.meter) ?? pending;
    for (const el of staff?.voices?.[0] ?? []) {
      if (el.el_type === 'meter') pending = meterOf(el) ?? pending;
      else if (pending && el.currentTrackWholeNotes !== undefined) {
        for (const t of ([] as number[]).concat(el.currentTrackWholeNotes)) found.push({ beat: beats(t), ...pending });
        pending = null;
      }
    }
  }
  found.sort((a, b) => a.beat - b.beat);
  return found.filter((m, i) => i === 0 || m.numerator !== found[i - 1].numerator || m.denominator !== found[i - 1].denominator);
}

/**
 * abcjs plays a repeated section in the key that was in force where the
 * repeat sign stands only when it goes back to the start; going back to a
 * start-repeat sign after a key change, it would keep the new key. So the
 * key in force is written again after each start-repeat sign, as a reader
 * sees it. abcjs drops a key equal to the one before it, so the copy follows
 * a placeholder key that differs from it (one with no accidentals, or one
 * sharp for a key that has none); the copy then sets the key at once.
 */
function keysAtRepeats(tune: AbcTune): void {
  const inForce = new Map<string, AbcKey>();
  for (const line of tune.lines) {
    (line.staff ?? []).forEach((staff, j) => {
      (staff.voices ?? []).forEach((voice, k) => {
        const id = `${j}/${k}`;
        if (staff.key) inForce.set(id, staff.key);
        for (let i = 0; i < voice.length; i++) {
          const el = voice[i];
          const key = inForce.get(id);
          if (el.el_type === 'key') inForce.set(id, el as AbcKey);
          else if (el.el_type === 'bar' && (el.type === 'bar_left_repeat' || el.type === 'bar_dbl_repeat') && key) {
            const plain = !(key.accidentals ?? []).some((a) => a.acc !== 'natural');
            const placeholder = { el_type: 'key', accidentals: plain ? [{ acc: 'sharp', note: 'f' }] : [] };
            voice.splice(i + 1, 0, placeholder, { ...key, el_type: 'key' });
            i += 2;
          }
        }
      });
    });
  }
}

/** One tune's text → a piece. Throws a TuneError saying what is wrong with the tune. */
function readTune(abc: string, id: string, options: { percussion?: boolean }): ScorePiece {
  const [tune] = abcjs().parseOnly(abc) as unknown as AbcTune[];
  if (!tune) throw new TuneError('holds no tune abcjs could read');
  const byChar = new Map<number, AbcElement>();
  const written = elements(tune).reduce((sum, el) => sum + (el.el_type === 'note' && el.rest?.type !== 'multimeasure' ? Math.abs(Number(el.duration)) || 0 : 0), 0);
  if (!(written <= MAX_WHOLE_NOTES)) throw new TuneError(`is ${written.toLocaleString('en')} whole notes long as written, longer than the ${MAX_WHOLE_NOTES.toLocaleString('en')} earwitness plays in one tune`);
  const trilled = elements(tune).reduce((sum, el) => sum + (el.el_type === 'note' && el.decoration?.some((d) => d === 'trill' || d === 'trillh') ? Math.abs(Number(el.duration)) || 0 : 0), 0);
  if (!(trilled <= MAX_TRILLED_WHOLE_NOTES)) throw new TuneError(`has trills ${trilled.toLocaleString('en')} whole notes long in all, more than the ${MAX_TRILLED_WHOLE_NOTES.toLocaleString('en')} earwitness plays in one tune (abcjs writes a trill out in 32nd notes)`);
  const restBars = elements(tune).reduce((n, el) => n + (el.rest?.type === 'multimeasure' ? Number(el.rest.text) || 0 : 0), 0);
  if (restBars > MAX_REST_BARS) throw new TuneError(`rests for ${restBars.toLocaleString('en')} bars (Z), more than the ${MAX_REST_BARS.toLocaleString('en')} earwitness plays in one tune`);
  const ending = elements(tune).flatMap((e) => (e.startEnding ? String(e.startEnding).split(/[^0-9]+/) : [])).map(Number).find((n) => n > MAX_ENDING);
  if (ending !== undefined) throw new TuneError(`has an ending numbered ${ending}; earwitness plays endings numbered up to ${MAX_ENDING}`);
  const meters = [...tune.lines.flatMap((l) => (l.staff ?? []).map((st) => st.meter)), ...elements(tune).filter((e) => e.el_type === 'meter')];
  for (const v of meters.flatMap((m) => m?.value ?? [])) {
    const [den, ...nums] = [String(v.den), ...String(v.num).split('+')].map(Number);
    // A denominator of 0 is as fatal as a vast one: abcjs sizes the bar by dividing by it.
    if (!(den >= 1 && den <= MAX_METER) || nums.some((n) => !(Math.abs(n) <= MAX_METER))) throw new TuneError(`has the time signature ${v.num}/${v.den}; earwitness plays time signatures of at most ${MAX_METER} over 1 to ${MAX_METER}`);
  }
  for (const el of elements(tune)) {
    delete el.gracenotes;
    if (el.startChar !== undefined && el.el_type === 'note') byChar.set(el.startChar, el);
  }
  keysAtRepeats(tune);
  const { tracks } = tune.setUpAudio({ chordsOff: true, drumOff: true });
  const notes: Note[] = [];
  let spelled = !transposed(tune);
  for (const track of tracks) {
    const program = track.find((e) => e.cmd === 'program');
    const channel = Math.min(16, (program?.channel ?? 0) + 1);
    if (channel === PERCUSSION_CHANNEL && !options.percussion) continue;
    for (const e of track) {
      if (e.cmd !== 'note' || !(e.pitch >= 0 && e.pitch <= 127) || !Number.isFinite(e.start) || !(e.start >= 0) || !Number.isFinite(e.duration)) continue;
      const el = e.startChar === undefined ? undefined : byChar.get(e.startChar);
      const i = el?.midiPitches?.findIndex((m) => m.pitch === e.pitch) ?? -1;
      const step = i >= 0 ? el!.pitches?.filter((p) => p)[i]?.pitch : undefined;
      const morph = step === undefined ? null : writtenMorph(step, e.pitch);
      if (morph === null) spelled = false;
      notes.push({ onset: beats(e.start), duration: Math.max(0, beats(e.duration)), pitch: e.pitch, morph: morph ?? e.pitch, velocity: Math.min(127, Math.max(1, Math.round(e.volume))), channel });
      if (notes.length > MAX_SCORE_NOTES) throw new TuneError(`comes to more than ${MAX_SCORE_NOTES.toLocaleString('en')} notes with its repeats written out, the most earwitness reads from one tune`);
    }
  }
  notes.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  const key = keyOf(tune) ?? estimateKey(notes);
  return {
    id,
    title: tune.metaText.title?.trim() || null,
    notes: spelled ? notes : spellNotes(notes, estimateKey(notes)),
    key,
    beats: notesLength(notes),
    meters: metersOf(tune),
  };
}

/** Each tune's id: its X: number, with ".2", ".3"… on a number the file has used before (or the tune's place in the file, when it has none). */
function tuneIds(tunes: { pure: string }[]): string[] {
  const seen = new Map<string, number>();
  return tunes.map((t, i) => {
    const x = /^X:[ \t]*([^\s%]+)/.exec(t.pure)?.[1] ?? String(i + 1);
    const n = (seen.get(x) ?? 0) + 1;
    seen.set(x, n);
    return n === 1 ? x : `${x}.${n}`;
  });
}

/** Parses an ABC file's text into its tunes; a tune that cannot be read is listed with its reason. Throws ScoreFileError when the file holds no tune. */
export function parseAbc(text: string, file: string, options: { percussion?: boolean } = {}): ScoreFile {
  const book = new (abcjs().TuneBook)(text.replace(/\r\n?/g, '\n')) as unknown as { tunes: { abc: string; pure: string }[] };
  const tunes = book.tunes.filter((t) => /^[XK]:/m.test(t.pure)); // text with neither is a file's header or free text between tunes
  if (tunes.length === 0) throw new ScoreFileError(file, 'holds no ABC tune (a tune starts with an X: line, then its header fields and the K: key)');
  const ids = tuneIds(tunes);
  const pieces: ScorePiece[] = [];
  const skipped: SkippedPiece[] = [];
  tunes.forEach((t, i) => {
    try {
      pieces.push(readTune(t.abc, ids[i], options));
    } catch (e) {
      skipped.push({ id: ids[i], error: `tune X:${ids[i]} ${e instanceof TuneError ? e.message : `could not be read by abcjs (${e instanceof Error ? e.message : String(e)})`}` });
    }
  });
  return { pieces, skipped };
}
