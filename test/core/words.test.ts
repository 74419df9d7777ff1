/**
 * The one vocabulary (core/words.ts): transpositions, positions, the pitch
 * dimension's names and onset grids as a musician reads them, and a check
 * over every source file that nothing else spells out a transposition.
 * Note values as grids: a quarter note is the beat, so a 1/16 note is a
 * quarter of it and a 1/16 triplet a sixth (common practice, no source).
 */
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';
import { barBeatText, gridWords, parseGrid, parsePitch, positionWords, tempoWords, transpositionWords } from '../../core/words.js';
import { ROOT } from '../helpers/daemon.js';

describe('transposition words', () => {
  it('from the corpus passage to what was played, in semitones or scale steps', () => {
    expect(transpositionWords(0)).toBe('same pitch');
    expect(transpositionWords(5)).toBe('5 semitones up');
    expect(tempoWords(1.5)).toBe('1.5× as long (slower)');
    expect(tempoWords(0.75)).toBe('0.75× as long (faster)');
    expect(tempoWords(0.99)).toBeNull();
    expect(transpositionWords(-3)).toBe('3 semitones down');
    expect(transpositionWords(-1)).toBe('1 semitone down');
    expect(transpositionWords(2, 'morphetic')).toBe('2 scale steps up');
    expect(transpositionWords(-1, 'morphetic')).toBe('1 scale step down');
  });
});

describe('position words', () => {
  it('bar:beat from 1; before the start in words, never a negative number', () => {
    expect(barBeatText([], 0)).toBe('1:1');
    expect(barBeatText([{ beat: 0, numerator: 6, denominator: 8 }], 34.5)).toBe('12:2');
    expect(positionWords([], 9)).toBe('bar 3, beat 2');
    expect(positionWords([], -2)).toBe('2 beats before the piece begins');
    expect(positionWords([], -1, 'the tune')).toBe('1 beat before the tune begins');
  });
});

describe('pitch and grid as a musician names them', () => {
  it('--pitch diatonic, with morphetic kept as its alias', () => {
    expect(parsePitch('diatonic')).toBe('morphetic');
    expect(parsePitch('morphetic')).toBe('morphetic');
    expect(parsePitch('chromatic')).toBe('chromatic');
    expect(parsePitch('modal')).toBeNull();
  });

  it('note values as grids: 1/16 = 4 a beat, 1/16T = 6, 1/32 = 8, 1/8T = 3; numbers still accepted', () => {
    expect(parseGrid('1/16')).toBe(4);
    expect(parseGrid('1/16T')).toBe(6);
    expect(parseGrid('1/32')).toBe(8);
    expect(parseGrid('1/8t')).toBe(3);
    expect(parseGrid('12')).toBe(12);
    expect(parseGrid('0')).toBe(0);
    expect(parseGrid('1/2')).toBeNull(); // longer than a beat: no whole number of divisions
    expect(parseGrid('1/12')).toBeNull();
    expect([4, 6, 8, 12, 0, 5].map(gridWords)).toEqual(['1/16', '1/16T', '1/32', '1/32T', 'as played', '1/5 beat']);
  });
});

/** Every .ts file a person's words could come from: the bridge, the overlay, core and the contract. */
function sources(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = join(dir, name);
    return statSync(p).isDirectory() ? sources(p) : /\.ts$/.test(name) && !/\.d\.ts$/.test(name) ? [p] : [];
  });
}

/** The text of every string literal and template part in a file (comments are not read). */
function strings(file: string): { text: string; line: number }[] {
  const src = ts.createSourceFile(file, readFileSync(file, 'utf8'), ts.ScriptTarget.Latest, true);
  const out: { text: string; line: number }[] = [];
  const visit = (n: ts.Node): void => {
    if (ts.isStringLiteral(n) || ts.isNoSubstitutionTemplateLiteral(n) || ts.isTemplateHead(n) || ts.isTemplateMiddle(n) || ts.isTemplateTail(n)) {
      out.push({ text: n.text, line: src.getLineAndCharacterOfPosition(n.getStart()).line + 1 });
    }
    n.forEachChild(visit);
  };
  visit(src);
  return out;
}

/** Words that tell a transposition: only core/words.ts may hold them. */
const TRANSPOSITION = /semitone|scale step|diatonic step|pitch step|same pitch|untransposed|transposed|at pitch\b/i;

describe('one place for transposition words', () => {
  it('no string in bridge/, ui/src/, core/ or contract/ outside core/words.ts tells a transposition', () => {
    const files = ['bridge', 'ui/src', 'core', 'contract'].flatMap((d) => sources(join(ROOT, d))).filter((f) => !f.endsWith(join('core', 'words.ts')));
    expect(files.length).toBeGreaterThan(50);
    const found = files.flatMap((f) => strings(f).filter((s) => TRANSPOSITION.test(s.text)).map((s) => `${relative(ROOT, f)}:${s.line}: ${JSON.stringify(s.text)}`));
    expect(found).toEqual([]);
  });

  it('the check finds such a string where one is', () => {
    const file = join(ROOT, 'core', 'words.ts');
    expect(strings(file).some((s) => TRANSPOSITION.test(s.text))).toBe(true);
  });
});
