/**
 * The ABC reader (bridge/formats/abc.ts) checked against Debian's abc2midi
 * (package abcmidi) read back through midicsv: for every tune of a tune
 * book invented for the test (abc-tunes.ts), the notes earwitness reads
 * equal the notes in abc2midi's MIDI file. abc2midi runs with -NGRA (grace
 * notes left out, as earwitness does), -NGUI (no accompaniment from chord
 * symbols) and -NFER (fermatas not lengthened). Spelling and the tune book's
 * structure are checked against the ABC 2.1 standard's rules.
 *
 * @example
 *   npx vitest run test/bridge/formats/abc.test.ts
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { parseAbc, writtenMorph } from '../../../bridge/formats/abc.js';
import { ScoreFileError } from '../../../bridge/formats/score-piece.js';
import type { Note } from '../../../core/note.js';
import { tool } from '../../helpers/which.js';
import { TUNE_BOOK } from './abc-tunes.js';
import { type HeardNote, midicsvNotes } from './midicsv-notes.js';

const abc2midi = tool('abc2midi', 'abcmidi');
const midicsv = tool('midicsv', 'midicsv');
const dir = mkdtempSync(join(tmpdir(), 'ew-abc-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const book = parseAbc(TUNE_BOOK, 'book.abc');

/**
 * Pairs earwitness's notes with abc2midi's, sorted by pitch then onset.
 * abc2midi starts each note a tick late and spreads a chord's notes 10 ticks
 * apart (seen in its output at 480 ticks a beat: a three-note chord's top
 * note starts 21 ticks late), so its note-on may come up to 30 ticks after
 * earwitness's onset, never before; note-offs agree to a tick.
 */
function compare(mine: readonly Note[], theirs: readonly HeardNote[]): string[] {
  const order = <T extends { pitch: number; onset: number }>(a: T, b: T): number => a.pitch - b.pitch || a.onset - b.onset;
  const a = [...mine].sort(order);
  const b = [...theirs].sort(order);
  const wrong: string[] = [];
  if (a.length !== b.length) wrong.push(`earwitness reads ${a.length} notes, abc2midi plays ${b.length}`);
  for (let i = 0; i < Math.min(a.length, b.length); i++) {
    const late = b[i].onset - a[i].onset;
    const endGap = Math.abs(b[i].end - (a[i].onset + a[i].duration));
    if (a[i].pitch !== b[i].pitch || late < -1 / 480 || late > 30 / 480 || endGap > 1 / 480) {
      wrong.push(`pitch ${a[i].pitch} at ${a[i].onset}–${a[i].onset + a[i].duration} beats; abc2midi: pitch ${b[i].pitch} at ${b[i].onset}–${b[i].end}`);
    }
  }
  return wrong;
}

describe.skipIf(!abc2midi.path || !midicsv.path)(`the notes of each tune against ${abc2midi.label} and ${midicsv.label}`, () => {
  const file = join(dir, 'book.abc');
  writeFileSync(file, TUNE_BOOK);
  if (abc2midi.path) execFileSync(abc2midi.path, [file, '-NGRA', '-NGUI', '-NFER', '-silent', '-quiet'], { cwd: dir });
  it('abc2midi wrote one MIDI file per tune', () => {
    // abc2midi(1): without -o, each tune goes to <stem><X number>.mid.
    expect(readdirSync(dir).filter((f) => f.endsWith('.mid')).sort()).toEqual(book.pieces.map((p) => `book${p.id}.mid`).sort());
  });
  for (const piece of book.pieces) {
    it(`X:${piece.id} ${piece.title}`, () => {
      expect(compare(piece.notes, midicsvNotes(midicsv.path!, join(dir, `book${piece.id}.mid`)))).toEqual([]);
    });
  }
});

describe('a tune book', () => {
  it('gives one piece per tune, with its X: number and T: title (ABC 2.1: a tune starts at X: and ends at a blank line)', () => {
    expect(book.skipped).toEqual([]);
    expect(book.pieces.map((p) => [p.id, p.title])).toEqual([
      ['1', 'Gull Point Reel'],
      ['2', 'Skerrow Jig'],
      ['3', 'Kelp Waltz'],
      ['4', 'Two Voices'],
      ['5', 'Tideline March'],
      ['6', 'Low Fiddle'],
    ]);
  });

  it('names a second tune with an X: number already used with .2, and reads CR LF line ends', () => {
    const twice = parseAbc('X:3\r\nT:One\r\nK:C\r\nCDE|\r\n\r\nX:3\r\nT:Other\r\nK:C\r\nEDC|\r\n', 'twice.abc');
    expect(twice.pieces.map((p) => [p.id, p.title, p.notes.length])).toEqual([
      ['3', 'One', 3],
      ['3.2', 'Other', 3],
    ]);
  });

  it('is refused when it holds no tune', () => {
    expect(() => parseAbc('% only a comment\n', 'empty.abc')).toThrow(ScoreFileError);
    expect(() => parseAbc('% only a comment\n', 'empty.abc')).toThrow(/empty.abc: holds no ABC tune/);
  });

  it('keeps the key (K:) and the time signatures (M:, inline [M:]) where they take effect', () => {
    const jig = book.pieces[1];
    // ABC 2.1, K: modes: A dorian has the signature of G major, one sharp; the key is the first K:, not the later K:G.
    expect(jig.key).toMatchObject({ fifths: 1 });
    // A pickup of an eighth, two passes of three 6/8 bars (the second ending is one beat and a half short): 9/8 from beat 18.
    expect(jig.meters).toEqual([
      { beat: 0, numerator: 6, denominator: 8 },
      { beat: 18, numerator: 9, denominator: 8 },
    ]);
    expect(book.pieces[2].meters).toEqual([
      { beat: 0, numerator: 3, denominator: 4 },
      { beat: 12, numerator: 2, denominator: 4 },
    ]);
  });
});

describe('spelling as the tune writes it', () => {
  it('gives F sharp and G flat, the same key on the keyboard, different letters (morphetic pitch: C4 = 60, one step a letter)', () => {
    const [t] = parseAbc('X:1\nT:Spell\nL:1/4\nK:C\n^F _G =B ^^C __D|\n', 's.abc').pieces;
    // ABC 2.1: ^ sharp, _ flat, = natural, ^^ and __ double; F is F4 (65 + 1 = 66), C is middle C.
    expect(t.notes.map((n) => [n.pitch, n.morph])).toEqual([
      [66, 63],
      [66, 64],
      [71, 66],
      [62, 60],
      [60, 61],
    ]);
  });

  it('moves letters by whole octaves with an octave clef (clef=treble-8 sounds an octave down)', () => {
    const low = book.pieces[5];
    expect(low.notes[0]).toMatchObject({ pitch: 55, morph: 57 }); // G4 written, G3 sounding: 7 × 3 + 4 + 32
    expect(writtenMorph(4, 55)).toBe(57);
    expect(writtenMorph(4, 68)).toBe(64); // G#4
    expect(writtenMorph(4, 62)).toBeNull(); // no accidental makes a G sound as D: a transposed tune is spelled by key finding
  });

  it('spells a tune transposed by another interval by key finding, and still plays it transposed', () => {
    const [t] = parseAbc('X:1\nT:Up\nL:1/4\nK:C transpose=2\nCDEF|\n', 'up.abc').pieces;
    expect(t.notes.map((n) => n.pitch)).toEqual([62, 64, 66, 67]);
    expect(t.notes.map((n) => n.morph)).toEqual([61, 62, 63, 64]); // D E F# G in the key found
  });
});

describe('what is played', () => {
  it('leaves grace notes out; the note they ornament keeps its written time and length', () => {
    const [t] = parseAbc('X:1\nT:G\nL:1/4\nK:C\nC {ed}E G|\n', 'g.abc').pieces;
    expect(t.notes.map((n) => [n.onset, n.duration, n.pitch])).toEqual([
      [0, 1, 60],
      [1, 1, 64],
      [2, 1, 67],
    ]);
  });

  it('puts each voice on its own channel', () => {
    expect([...new Set(book.pieces[3].notes.map((n) => n.channel))].sort()).toEqual([1, 2]);
  });

  it('makes no accompaniment from chord symbols', () => {
    const [t] = parseAbc('X:1\nT:C\nL:1/4\nK:C\n"C"C "G"D "Am"E|\n', 'c.abc').pieces;
    expect(t.notes.map((n) => n.pitch)).toEqual([60, 62, 64]);
  });
});
