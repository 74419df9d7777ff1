/**
 * Key finding, pitch spelling and morphetic pitch (core/spelling.ts) against
 * the npm music-theory library `tonal`: its scale spellings
 * (Scale.get('Eb major').notes) and note numbers (Note.get('Eb4').midi).
 *
 * @example
 *   npx vitest run test/core/spelling.test.ts
 */
import { Note as TonalNote, Scale } from 'tonal';
import { describe, expect, it } from 'vitest';
import { type Key, type Mode, estimateKey, fifthsOfName, keyFromName, keyFromSignature, nameOfFifths, spell, spellNotes } from '../../core/spelling.js';

const MODES: Mode[] = ['major', 'minor'];
/** tonal's scale names: 'major' and (natural) 'minor'. */
const tonalScale = (key: Key): string[] => Scale.get(`${key.tonic} ${key.mode}`).notes;

/**
 * Morphetic pitch from tonal's letter index (C = 0 … B = 6) and octave, in
 * this project's convention (check-values.md, after Meredith 2006): C4 = 60,
 * one step per letter name.
 */
const tonalMorph = (name: string): number => {
  const n = TonalNote.get(name);
  return 60 + 7 * (n.oct! - 4) + n.step;
};

/** The scale in octave 4 and 5 with tonal's names and note numbers (Cb4 = 59, B#3 = 60 in tonal too). */
function scaleNotes(key: Key): { name: string; midi: number }[] {
  const notes = tonalScale(key);
  expect(notes).toHaveLength(7);
  return [4, 5].flatMap((octave) => notes.map((pc) => ({ name: `${pc}${octave}`, midi: TonalNote.get(`${pc}${octave}`).midi! })));
}

/** The 12 tonics of each mode, spelled as keyFromSignature names them for the conventional signatures −5…+6. */
const conventionalKeys = (mode: Mode): Key[] => Array.from({ length: 12 }, (_, i) => keyFromSignature(i - 5, mode === 'minor'));

function checkSpelling(key: Key): void {
  for (const { name, midi } of scaleNotes(key)) {
    const ours = spell(midi, key);
    expect(ours.name, `${name} in ${key.tonic} ${key.mode}`).toBe(name);
    expect(ours.morph, `morph of ${name}`).toBe(tonalMorph(name));
  }
}

describe('spelling against tonal: major and natural minor scales in all 24 keys', () => {
  for (const mode of MODES) {
    for (const key of conventionalKeys(mode)) {
      it(`${key.tonic} ${mode} (signature ${key.fifths})`, () => checkSpelling(key));
    }
  }

  it('the 24 keys are 12 different tonics in each mode', () => {
    for (const mode of MODES) expect(new Set(conventionalKeys(mode).map((k) => TonalNote.get(k.tonic).chroma)).size).toBe(12);
  });
});

describe('spelling against tonal: keys given by name, all 15 signatures in each mode', () => {
  const tonics = { major: ['Cb', 'Gb', 'Db', 'Ab', 'Eb', 'Bb', 'F', 'C', 'G', 'D', 'A', 'E', 'B', 'F#', 'C#'], minor: ['Ab', 'Eb', 'Bb', 'F', 'C', 'G', 'D', 'A', 'E', 'B', 'F#', 'C#', 'G#', 'D#', 'A#'] };
  for (const mode of MODES) {
    tonics[mode].forEach((tonic, i) => {
      it(`keyFromName('${tonic}', '${mode}') has signature ${i - 7} and spells its scale as tonal does`, () => {
        const key = keyFromName(tonic, mode);
        expect(key.fifths).toBe(i - 7);
        expect(keyFromSignature(key.fifths, mode === 'minor').tonic).toBe(tonic);
        checkSpelling(key);
      });
    });
  }

  it('harmonic minor: the raised 7th takes a sharp as tonal spells it (G# in A minor, C## in D# minor)', () => {
    for (const tonic of ['A', 'D#', 'Bb', 'F']) {
      const key = keyFromName(tonic, 'minor');
      const leading = Scale.get(`${tonic} harmonic minor`).notes[6];
      expect(spell(TonalNote.get(`${leading}4`).midi!, key).name).toBe(`${leading}4`);
    }
  });
});

describe('morphetic pitch: the values in check-values.md', () => {
  const C_MAJOR = keyFromName('C', 'major');
  it('C4 = 60, D4 61, E4 62, F4 63, G4 64, A4 65, B4 66, C5 67', () => {
    expect([60, 62, 64, 65, 67, 69, 71, 72].map((p) => spell(p, C_MAJOR).morph)).toEqual([60, 61, 62, 63, 64, 65, 66, 67]);
  });
  it('C#4 is 60 and Db4 is 61: the same key, two spellings', () => {
    expect(spell(61, keyFromName('A', 'major'))).toEqual({ name: 'C#4', morph: 60 });
    expect(spell(61, keyFromName('Ab', 'major'))).toEqual({ name: 'Db4', morph: 61 });
  });
  it('spellNotes gives every note the morph of its spelling and leaves the rest alone', () => {
    const notes = [61, 66].map((pitch, i) => ({ onset: i, duration: 1, pitch, morph: pitch, velocity: 80, channel: 1 }));
    expect(spellNotes(notes, keyFromName('D', 'major'))).toEqual([
      { ...notes[0], morph: 60 }, // C#4
      { ...notes[1], morph: 63 }, // F#4
    ]);
  });
});

describe('line of fifths', () => {
  it('names and positions agree both ways from Fbb to B## (tonal gives the same pitch class)', () => {
    for (let pos = -15; pos <= 19; pos++) {
      const name = nameOfFifths(pos);
      expect(fifthsOfName(name)).toBe(pos);
      expect(TonalNote.get(name).chroma).toBe((((pos * 7) % 12) + 12) % 12);
    }
  });
  it('a name that is not a note is an error that quotes it', () => {
    expect(() => fifthsOfName('H')).toThrow(/not a note name: "H"/);
    expect(() => fifthsOfName('C#b')).toThrow(/"C#b"/);
  });
});

/**
 * A passage built on the scale: each scale note for a beat, with the tonic
 * triad held longer on top — the kind of passage the Krumhansl–Schmuckler
 * method is meant to place.
 */
function scalePassage(key: Key): { pitch: number; duration: number }[] {
  const names = tonalScale(key);
  const triad = [names[0], names[2], names[4]];
  const midi = (pc: string): number => TonalNote.get(`${pc}4`).midi!;
  return [...names.map((pc) => ({ pitch: midi(pc), duration: 1 })), ...triad.map((pc) => ({ pitch: midi(pc), duration: 2 }))];
}

describe('key estimation (Krumhansl–Schmuckler, profiles from check-values.md)', () => {
  for (const mode of MODES) {
    for (const key of conventionalKeys(mode)) {
      it(`finds ${key.tonic} ${mode} in a scale passage with a weighted tonic triad`, () => {
        const found = estimateKey(scalePassage(key));
        expect({ tonic: found.tonic, mode: found.mode, fifths: found.fifths }).toEqual({ tonic: key.tonic, mode, fifths: key.fifths });
        expect(found.correlation).toBeGreaterThan(0.7);
      });
    }
  }

  it('an empty passage is C major with correlation 0', () => {
    expect(estimateKey([])).toEqual({ ...keyFromName('C', 'major'), correlation: 0 });
  });

  it('is unchanged by transposing a passage by octaves, and moves with it by a fifth', () => {
    const passage = scalePassage(keyFromName('D', 'major'));
    expect(estimateKey(passage.map((n) => ({ ...n, pitch: n.pitch + 12 }))).tonic).toBe('D');
    expect(estimateKey(passage.map((n) => ({ ...n, pitch: n.pitch + 7 }))).tonic).toBe('A');
  });
});
