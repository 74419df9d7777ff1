/**
 * The one vocabulary: every word a person reads about a transposition, a
 * position, the pitch dimension, the onset grid and the daemon's scoring
 * pass comes from here, so the terminal, the pages, the overlay and the
 * README say the same thing the same way.
 *
 * A transposition is always from the corpus passage to what was played
 * (+5 = played 5 semitones higher). A position is bar:beat in the piece's
 * metre, counted from 1 (core/bars.ts), never a negative number.
 *
 * @example
 *   transpositionWords(0)                    // → "same pitch"
 *   transpositionWords(-3)                   // → "3 semitones down"
 *   transpositionWords(2, 'morphetic')       // → "2 scale steps up"
 *   tempoWords(1.5)                          // → "1.5× as long (slower)"
 *   barBeatText([], 9)                       // → "3:2"
 *   positionWords([], -2)                    // → "2 beats before the piece begins"
 *   parseGrid('1/16T')                       // → 6 (divisions of a beat)
 */
import { type BarBeat, type Meter, barBeat, barFields } from './bars.js';
import type { PitchMode } from './note.js';

/** What the daemon does each time it scores the window: a word a live coder will not read as running code. */
export const SCORING_PASS = 'scoring pass';
export const SCORING_PASSES = 'scoring passes';

/** When a note starts. */
export const ONSET = 'onset';

const plural = (n: number, one: string, many = `${one}s`): string => `${n} ${Math.abs(n) === 1 ? one : many}`;

/** A whole or fractional number as a person writes it: 2, 2.5, 1.33. */
export const numberWords = (x: number): string => String(Math.round(x * 100) / 100);

/**
 * A tempo-free match's time scale as a player says it: null within 2% of the
 * corpus tempo, else "1.5× as long (slower)" or "0.75× as long (faster)".
 */
export function tempoWords(timeScale: number): string | null {
  if (Math.abs(timeScale - 1) < 0.02) return null;
  return `${numberWords(timeScale)}× as long (${timeScale > 1 ? 'slower' : 'faster'})`;
}

/** "same pitch", "5 semitones up", "1 semitone down", "2 scale steps up": from the corpus passage to what was played. */
export function transpositionWords(t: number, pitch: PitchMode = 'chromatic'): string {
  if (t === 0) return 'same pitch';
  const unit = pitch === 'morphetic' ? 'scale step' : 'semitone';
  return `${plural(Math.abs(t), unit)} ${t > 0 ? 'up' : 'down'}`;
}

/** The pitch dimension as a musician names it. */
export const pitchWords = (pitch: PitchMode): string => (pitch === 'morphetic' ? 'diatonic' : 'chromatic');

/** What `--pitch` means, for its help. */
export const PITCH_HELP = 'match by semitone (chromatic) or by scale step (diatonic; "morphetic", the published method\'s term, is the same)';

/** `--pitch` values: `diatonic` (matching by scale step; `morphetic`, the published method's term, is the same). */
export const PITCH_CHOICES = ['chromatic', 'diatonic', 'morphetic'] as const;

/** A `--pitch` value → the pitch dimension; null when it is none of PITCH_CHOICES. */
export function parsePitch(text: string): PitchMode | null {
  if (text === 'chromatic') return 'chromatic';
  return text === 'diatonic' || text === 'morphetic' ? 'morphetic' : null;
}

/** Bar and beat fields as a result carries them (null before the start, or when not worked out). */
export interface Placed {
  bar: number | null;
  beatInBar: number | null;
}

const before = (beat: number, what: string): string => `${beatsWords(-beat)} before ${what} begins`;

/** The fields when they hold a position; else the position worked out in 4/4 (a piece without metre), null before the start. */
const resolved = (at: Placed, beat: number): BarBeat | null =>
  at.bar !== null && at.beatInBar !== null ? { bar: at.bar, beatInBar: at.beatInBar } : barBeat([], beat);

/** A position already placed in bars, short: "3:1"; before the start, in words: "2 beats before the piece begins". */
export function placedText(at: Placed, beat: number, what = 'the piece'): string {
  const r = resolved(at, beat);
  return r ? `${r.bar}:${numberWords(r.beatInBar)}` : before(beat, what);
}

/** A position already placed in bars, in words: "bar 3, beat 1" (before the start as placedText). */
export function placedWords(at: Placed, beat: number, what = 'the piece'): string {
  const r = resolved(at, beat);
  return r ? `bar ${r.bar}, beat ${numberWords(r.beatInBar)}` : before(beat, what);
}

/** Bar and beat in `meter`, short: "12:2", "3:2.5". */
export const barBeatText = (meter: Meter, beat: number, what = 'the piece'): string => placedText(barFields(meter, beat), beat, what);

/** A position in `meter` in words: "bar 12, beat 2"; before the start, how far: "2 beats before the piece begins". */
export const positionWords = (meter: Meter, beat: number, what = 'the piece'): string => placedWords(barFields(meter, beat), beat, what);

/** A stretch, short: "5:1–9:1"; one beginning before the start: "before the start–2:1". */
export const spanText = (meter: Meter, from: number, to: number): string => `${from < 0 ? 'before the start' : barBeatText(meter, from)}–${barBeatText(meter, to)}`;

/** A length in quarter-note beats: "16 beats", "1 beat". */
export const beatsWords = (beats: number): string => plural(Number(numberWords(beats)), 'beat');

/**
 * Onset grids a sequencer user knows, as divisions of a quarter-note beat:
 * a straight 1/n note is n/4 of them, a triplet 1/nT 3n/8.
 */
const NOTE_VALUE = /^1\/(\d+)(T?)$/i;

/** "1/16" → 4, "1/16T" → 6, "1/32" → 8, "12" → 12, "0" → 0 (as played); null when it names no whole division of a beat. */
export function parseGrid(text: string): number | null {
  const t = text.trim();
  if (/^\d+$/.test(t)) return Number(t);
  const m = NOTE_VALUE.exec(t);
  if (!m) return null;
  const n = Number(m[1]);
  if (n < 1 || (n & (n - 1)) !== 0) return null;
  const divisions = m[2] ? (3 * n) / 8 : n / 4;
  return Number.isInteger(divisions) && divisions >= 1 ? divisions : null;
}

/** 4 → "1/16", 6 → "1/16T", 12 → "1/32T", 5 → "1/5 beat", 0 → "as played". */
export function gridWords(divisions: number): string {
  if (divisions === 0) return 'as played';
  const straight = divisions * 4;
  if ((straight & (straight - 1)) === 0) return `1/${straight}`;
  const triplet = (divisions * 8) / 3;
  if (Number.isInteger(triplet) && (triplet & (triplet - 1)) === 0) return `1/${triplet}T`;
  return `1/${divisions} beat`;
}
