/**
 * One MusicXML part (`<part>`), bar by bar, as MusicXML 4.0 defines its
 * timing: `<divisions>` units per quarter note; each `<note>`'s `<duration>`
 * moves the part's position on, except a `<chord/>` note, which starts with
 * the note before it, and a `<grace/>` note, which has no duration;
 * `<backup>` and `<forward>` move the position back and on (how a part holds
 * several voices); a bar lasts as far as its position reached. Pitches are
 * as written (`<step>`, `<alter>`, `<octave>`), moved to sounding pitch by
 * the part's `<transpose>` (`<chromatic>` semitones, `<diatonic>` letter
 * steps, `<octave-change>`, and a `<double/>` an octave below, or above).
 *
 * Left out: grace notes (they take no time in the bar, and would sit on top
 * of the note they ornament), cue notes (MusicXML marks them as not played),
 * unpitched (percussion) notes, and rests.
 *
 * @example
 *   readPartBars(partElement, 'song.musicxml').bars[0]
 *   // → { beats: 4, notes: [{ at: 0, duration: 1, pitch: 60, morph: 60, velocity: 80, tie: { start: false, stop: false } }, …],
 *   //     repeats: { forward: false, times: 0, endings: null }, meter: { numerator: 4, denominator: 4 }, fifths: 0, minor: false }
 */
import { morphOf } from '../../core/spelling.js';
import { MAX_PITCH } from '../../core/triple-index.js';
import type { BarRepeats } from './repeats.js';
import { ScoreFileError, onGrid } from './score-piece.js';
import { type XmlElement, child, childText, children } from './xml-tree.js';

export interface BarNote {
  /** Beats from the start of the bar. */
  at: number;
  duration: number;
  pitch: number;
  morph: number;
  velocity: number;
  tie: { start: boolean; stop: boolean };
}

export interface Bar {
  /** How far the bar's position reached, beats. */
  beats: number;
  notes: BarNote[];
  repeats: BarRepeats;
  /** A time signature given in this bar. */
  meter: { numerator: number; denominator: number } | null;
  /** A key signature given in this bar (sharps positive, flats negative). */
  key: { fifths: number; minor: boolean } | null;
}

/** The velocity of a note with no dynamics marked: about mezzo-forte (from memory of common practice). */
const DEFAULT_VELOCITY = 80;
/** MusicXML 4.0: `dynamics` is a percentage of the default forte, which is MIDI velocity 90. */
const FORTE = 90;
const PC_OF_STEP: Record<string, number> = { C: 0, D: 2, E: 4, F: 5, G: 7, A: 9, B: 11 };

interface Transpose {
  chromatic: number;
  diatonic: number;
  octave: number;
  /** 0, or ±1 for a part doubled an octave below (−1) or above (+1). */
  double: number;
}

interface PartState {
  divisions: number | null;
  transpose: Transpose;
  velocity: number;
}

const num = (s: string | undefined): number | null => {
  if (s === undefined || s.trim() === '') return null;
  const n = Number(s);
  return Number.isFinite(n) ? n : null;
};

const velocityOf = (dynamics: string | undefined): number | null => {
  const d = num(dynamics);
  return d === null ? null : Math.min(127, Math.max(1, Math.round((FORTE * d) / 100)));
};

function readTranspose(el: XmlElement): Transpose {
  const d = child(el, 'double');
  return {
    // MusicXML gives whole numbers; anything else is taken to the nearest.
    chromatic: Math.round(num(childText(el, 'chromatic')) ?? 0),
    diatonic: Math.round(num(childText(el, 'diatonic')) ?? 0),
    octave: Math.round(num(childText(el, 'octave-change')) ?? 0),
    double: d ? (d.attrs.above === 'yes' ? 1 : -1) : 0,
  };
}

/**
 * A written key signature as it sounds in a transposing part: an interval of
 * `diatonic` letter steps and `chromatic` semitones moves the key 7c − 12d
 * places on the line of fifths (a major second down, −1 and −2, is two
 * flats more), taken to the enharmonic signature of at most 7 accidentals.
 */
export function soundingFifths(fifths: number, t: Pick<Transpose, 'chromatic' | 'diatonic'>): number {
  const f = fifths + 7 * t.chromatic - 12 * t.diatonic;
  const near = f - 12 * Math.round(f / 12);
  return Math.abs(f) <= 7 ? f : Math.max(-7, Math.min(7, near));
}

/** `<ending number="1, 2">` → [1, 2]; numbers MusicXML allows are whole numbers from 1. */
const endingNumbers = (s: string | undefined): number[] =>
  (s ?? '')
    .split(/[\s,]+/)
    .map(Number)
    .filter((n) => Number.isInteger(n) && n >= 1);

/** The sounding notes of one `<note>` element (none for a rest; two for a doubled part). */
function soundingNotes(note: XmlElement, at: number, duration: number, state: PartState): BarNote[] {
  const p = child(note, 'pitch');
  if (!p) return [];
  const step = childText(p, 'step') ?? '';
  const octave = num(childText(p, 'octave'));
  if (!Object.hasOwn(PC_OF_STEP, step) || octave === null || !Number.isInteger(octave)) return [];
  const t = state.transpose;
  const written = 12 * (octave + 1) + PC_OF_STEP[step] + Math.round(num(childText(p, 'alter')) ?? 0);
  const pitch = written + t.chromatic + 12 * t.octave;
  const morph = morphOf(step, octave) + t.diatonic + 7 * t.octave;
  const ties = [...children(note, 'tie'), ...children(note, 'notations').flatMap((n) => children(n, 'tied'))].map((e) => e.attrs.type);
  const velocity = velocityOf(note.attrs.dynamics) ?? state.velocity;
  const one = (shift: number): BarNote => ({ at, duration, pitch: pitch + 12 * shift, morph: morph + 7 * shift, velocity, tie: { start: ties.includes('start'), stop: ties.includes('stop') } });
  // A pitch outside MIDI's range, or a letter a nonsensical <diatonic> moved past any pitch, cannot be played: left out.
  return (t.double ? [one(0), one(t.double)] : [one(0)]).filter((n) => n.pitch >= 0 && n.pitch <= 127 && n.morph >= 0 && n.morph <= MAX_PITCH);
}

function readRepeats(measure: XmlElement, ending: { numbers: number[] | null }): BarRepeats {
  const barlines = children(measure, 'barline');
  let forward = false;
  let times = 0;
  let endings: number[] | null = ending.numbers;
  let closes = false;
  for (const b of barlines) {
    const repeat = child(b, 'repeat');
    if (repeat?.attrs.direction === 'forward') forward = true;
    if (repeat?.attrs.direction === 'backward') times = Math.max(2, Math.floor(num(repeat.attrs.times) ?? 2));
    for (const e of children(b, 'ending')) {
      if (e.attrs.type === 'start') endings = ending.numbers = endingNumbers(e.attrs.number);
      else closes = true;
    }
  }
  if (closes) ending.numbers = null;
  return { forward, times, endings: endings && endings.length ? endings : null };
}

function readMeter(time: XmlElement): Bar['meter'] {
  const numerator = children(time, 'beats').reduce((s, b) => s + b.text.split('+').reduce((t, x) => t + (num(x) ?? 0), 0), 0);
  const denominator = num(childText(time, 'beat-type'));
  return numerator > 0 && denominator !== null && denominator > 0 ? { numerator, denominator } : null;
}

/** Applies an `<attributes>` element to the part's state; returns the time and key signatures it gives. */
function readAttributes(el: XmlElement, state: PartState, file: string): Pick<Bar, 'meter' | 'key'> {
  const divisions = num(childText(el, 'divisions'));
  if (divisions !== null) {
    if (!(divisions > 0)) throw new ScoreFileError(file, `gives <divisions>${childText(el, 'divisions')}</divisions>; MusicXML wants a positive number of units per quarter note`);
    state.divisions = divisions;
  }
  const transpose = child(el, 'transpose');
  if (transpose) state.transpose = readTranspose(transpose);
  const time = child(el, 'time');
  const key = child(el, 'key');
  const fifths = key && num(childText(key, 'fifths'));
  return {
    meter: time ? readMeter(time) : null,
    key: fifths !== undefined && fifths !== null ? { fifths: soundingFifths(Math.round(fifths), state.transpose), minor: childText(key!, 'mode') === 'minor' } : null,
  };
}

/** Reads a part's bars. Throws ScoreFileError on a duration that cannot be placed. */
export function readPartBars(part: XmlElement, file: string): Bar[] {
  const state: PartState = { divisions: null, transpose: { chromatic: 0, diatonic: 0, octave: 0, double: 0 }, velocity: DEFAULT_VELOCITY };
  const ending = { numbers: null as number[] | null };
  const beatsOf = (el: XmlElement, bar: string): number => {
    const d = num(childText(el, 'duration'));
    if (d === null || d < 0) return 0;
    if (state.divisions === null) throw new ScoreFileError(file, `part ${part.attrs.id ?? '?'}, bar ${bar}: a <duration> comes before any <divisions>, so it cannot be turned into beats; give <divisions> in the part's first <attributes>`);
    return onGrid(d / state.divisions);
  };
  return children(part, 'measure').map((measure) => {
    const bar: Bar = { beats: 0, notes: [], repeats: readRepeats(measure, ending), meter: null, key: null };
    const where = measure.attrs.number ?? '?';
    let pos = 0;
    let chordAt = 0;
    for (const el of measure.children) {
      if (el.name === 'attributes') {
        const given = readAttributes(el, state, file);
        bar.meter ??= given.meter;
        bar.key ??= given.key;
      } else if (el.name === 'sound' || el.name === 'direction') {
        const v = velocityOf((el.name === 'sound' ? el : child(el, 'sound'))?.attrs.dynamics);
        if (v !== null) state.velocity = v;
      } else if (el.name === 'backup') pos = Math.max(0, onGrid(pos - beatsOf(el, where)));
      else if (el.name === 'forward') pos = onGrid(pos + beatsOf(el, where));
      else if (el.name === 'note') {
        if (child(el, 'grace')) continue;
        const duration = beatsOf(el, where);
        const chord = !!child(el, 'chord');
        const at = chord ? chordAt : pos;
        if (!child(el, 'cue')) bar.notes.push(...soundingNotes(el, at, duration, state));
        if (!chord) {
          chordAt = pos;
          pos = onGrid(pos + duration);
        }
      }
      bar.beats = Math.max(bar.beats, pos);
    }
    return bar;
  });
}
