/**
 * Key finding and pitch spelling, giving each note its morphetic pitch.
 *
 * Keys are found with the Krumhansl–Schmuckler method: the passage's
 * duration-weighted pitch-class profile is correlated with the 24 rotations
 * of the Krumhansl–Kessler profiles and the best is taken. Spelling places
 * each pitch class on the line of fifths as near as possible to the key's
 * centre, so diatonic notes take the key's names and chromatic ones the
 * nearer of their two names.
 *
 * @example
 *   estimateKey(notes)          // → { tonic: 'A', mode: 'minor', fifths: 0, correlation: 0.8 }
 *   spell(68, keyFromName('A', 'minor'))  // → { name: 'G#4', morph: 64 }
 */
import type { Note } from './note.js';

export type Mode = 'major' | 'minor';

export interface Key {
  /** Tonic name, e.g. 'F#', 'Bb'. */
  tonic: string;
  mode: Mode;
  /** Key signature: sharps positive, flats negative (−7…+7), as in an SMF key signature. */
  fifths: number;
  /** Correlation with the best profile, when estimated (1 when read from the file). */
  correlation: number;
}

/** Krumhansl–Kessler probe-tone profiles, tonic first (../shared/reference, from memory). */
export const MAJOR_PROFILE = [6.35, 2.23, 3.48, 2.33, 4.38, 4.09, 2.52, 5.19, 2.39, 3.66, 2.29, 2.88];
export const MINOR_PROFILE = [6.33, 2.68, 3.52, 5.38, 2.6, 3.53, 2.54, 4.75, 3.98, 2.69, 3.34, 3.17];

const LETTERS_BY_FIFTHS = 'FCGDAEB';
const STEP_OF_LETTER: Record<string, number> = { C: 0, D: 1, E: 2, F: 3, G: 4, A: 5, B: 6 };
const PC_OF_LETTER: Record<string, number> = { C: 0, D: 2, E: 4, F: 5, G: 7, A: 9, B: 11 };

const mod = (n: number, m: number): number => ((n % m) + m) % m;

/** Line-of-fifths position (C = 0, G = 1, F = −1, F# = 6, Bb = −2) → name without octave. */
export function nameOfFifths(pos: number): string {
  const letter = LETTERS_BY_FIFTHS[mod(pos + 1, 7)];
  const alter = Math.floor((pos + 1) / 7);
  return letter + (alter > 0 ? '#'.repeat(alter) : 'b'.repeat(-alter));
}

/** Name without octave ('F#', 'Bb', 'C') → line-of-fifths position. Throws on anything else. */
export function fifthsOfName(name: string): number {
  const m = /^([A-G])(#*|b*)$/.exec(name);
  if (!m) throw new Error(`not a note name: "${name}" (expected a letter A–G and optional # or b)`);
  const alter = m[2].startsWith('#') ? m[2].length : -m[2].length;
  return LETTERS_BY_FIFTHS.indexOf(m[1]) - 1 + 7 * alter;
}

/** A key from its tonic name and mode. */
export function keyFromName(tonic: string, mode: Mode): Key {
  const pos = fifthsOfName(tonic);
  return { tonic, mode, fifths: mode === 'major' ? pos : pos - 3, correlation: 1 };
}

/** A key from an SMF key signature (sf −7…+7, minor flag). */
export function keyFromSignature(fifths: number, minor: boolean): Key {
  const tonicPos = minor ? fifths + 3 : fifths;
  return { tonic: nameOfFifths(tonicPos), mode: minor ? 'minor' : 'major', fifths, correlation: 1 };
}

/** Tonic pitch class → the conventional key signature for it (Db…F# major, Bb…D# minor). */
function signatureForTonic(pc: number, mode: Mode): number {
  const majorPc = mode === 'major' ? pc : mod(pc + 3, 12);
  const pos = mod(majorPc * 7, 12);
  return pos > 6 ? pos - 12 : pos;
}

function correlation(a: readonly number[], b: readonly number[]): number {
  const n = a.length;
  const ma = a.reduce((s, x) => s + x, 0) / n;
  const mb = b.reduce((s, x) => s + x, 0) / n;
  let num = 0;
  let da = 0;
  let db = 0;
  for (let i = 0; i < n; i++) {
    num += (a[i] - ma) * (b[i] - mb);
    da += (a[i] - ma) ** 2;
    db += (b[i] - mb) ** 2;
  }
  return da === 0 || db === 0 ? 0 : num / Math.sqrt(da * db);
}

/** Krumhansl–Schmuckler key estimate of a passage (C major for an empty one). */
export function estimateKey(notes: readonly Pick<Note, 'pitch' | 'duration'>[]): Key {
  const profile = new Array<number>(12).fill(0);
  for (const n of notes) profile[mod(n.pitch, 12)] += n.duration > 0 ? n.duration : 0.25;
  let best = { pc: 0, mode: 'major' as Mode, r: -Infinity };
  for (const mode of ['major', 'minor'] as const) {
    const ref = mode === 'major' ? MAJOR_PROFILE : MINOR_PROFILE;
    for (let pc = 0; pc < 12; pc++) {
      const rotated = ref.map((_, i) => ref[mod(i - pc, 12)]);
      const r = correlation(profile, rotated);
      if (r > best.r + 1e-12) best = { pc, mode, r };
    }
  }
  const fifths = signatureForTonic(best.pc, best.mode);
  const key = keyFromSignature(fifths, best.mode === 'minor');
  return { ...key, correlation: Number.isFinite(best.r) ? best.r : 0 };
}

/** Morphetic pitch of a letter name in an octave (scientific pitch: C4 → 60, D4 → 61, B3 → 59), whatever its accidental. */
export function morphOf(letter: string, octave: number): number {
  const step = STEP_OF_LETTER[letter];
  if (step === undefined) throw new Error(`not a letter name: "${letter}" (expected A–G)`);
  return 7 * octave + step + 32;
}

export interface Spelled {
  /** Scientific pitch name, C4 = MIDI 60. */
  name: string;
  morph: number;
}

/**
 * Spells a MIDI note in a key. The centre sits a little sharp of the key
 * signature's middle in minor, so the raised 6th and 7th take sharps (G# in
 * A minor), and a little flat in major, so the lowered 6th is Ab in C major.
 */
export function spell(pitch: number, key: Key): Spelled {
  const centre = key.fifths + (key.mode === 'minor' ? 2.5 : 1.5);
  const base = mod(pitch * 7, 12);
  const lift = Math.round((centre - base) / 12);
  const pos = base + 12 * lift;
  const pc = nameOfFifths(pos);
  const letter = pc[0];
  const alter = Math.floor((pos + 1) / 7);
  const octave = Math.floor((pitch - alter - PC_OF_LETTER[letter]) / 12) - 1;
  return { name: `${pc}${octave}`, morph: morphOf(letter, octave) };
}

/** Gives every note its morphetic pitch in the given key (or one estimated from the notes). */
export function spellNotes<N extends Note>(notes: readonly N[], key: Key = estimateKey(notes)): N[] {
  return notes.map((n) => ({ ...n, morph: spell(n.pitch, key).morph }));
}
