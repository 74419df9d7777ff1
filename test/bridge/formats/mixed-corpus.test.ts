/**
 * A corpus that mixes the three formats gives the same report as the same
 * tunes as MIDI files: five tunes invented here (seeded melodies), written
 * once as Standard MIDI Files (test/helpers/smf.mjs, laid out by hand per
 * SMF 1.0) and once as an ABC tune book of two tunes (the first with a
 * repeat, written out in its MIDI twin), a MusicXML score (notes crossing a
 * bar line split and tied, as MusicXML writes them), a compressed .mxl, and
 * one MIDI file. `report --json` over both corpora, read from their files
 * and through `corpus build`'s index, must agree window by window. The
 * built CLI runs as a user runs it (`node dist/bridge/cli.js`).
 *
 * @example
 *   npx tsc -p tsconfig.json && npx vitest run test/bridge/formats/mixed-corpus.test.ts
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { zipSync } from 'fflate';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { deltas, endOfTrack, noteEvents, smf, track, trackName } from '../../helpers/smf.mjs';

const ROOT = join(import.meta.dirname, '../../..');
const CLI = join(ROOT, 'dist/bridge/cli.js');
const dir = mkdtempSync(join(tmpdir(), 'ew-mixed-'));
const asMidi = join(dir, 'as-midi');
const mixed = join(dir, 'mixed');
const queries = join(dir, 'queries');

interface Tone {
  /** In eighth notes. */
  at: number;
  length: number;
  pitch: number;
}

/** A seeded melody of `bars` 4/4 bars in eighths, on a scale, with a rest now and then. */
function melody(seed: number, bars: number, scale: number[]): Tone[] {
  let s = seed;
  const next = (n: number): number => {
    s = (s * 1103515245 + 12345) % 2147483648;
    return Math.floor((s / 2147483648) * n);
  };
  const tones: Tone[] = [];
  let at = next(2); // now and then a rest first
  let step = next(scale.length);
  while (at < bars * 8) {
    const length = Math.min([1, 1, 2, 3][next(4)], bars * 8 - at);
    step = Math.max(0, Math.min(scale.length - 1, step + next(5) - 2));
    if (next(9) > 0) tones.push({ at, length, pitch: scale[step] });
    at += length;
  }
  return tones;
}

const D_MAJOR = [62, 64, 66, 67, 69, 71, 73, 74, 76, 78, 79, 81];
const G_MINOR = [55, 57, 58, 60, 62, 63, 66, 67, 69, 70, 72, 74];
const half = melody(11, 4, D_MAJOR);
const rest = melody(12, 4, D_MAJOR).map((t) => ({ ...t, at: t.at + 32 }));
/** Tune 1 is |: four bars :| four more: its MIDI twin plays the first four twice. */
const TUNES: { title: string; tones: Tone[] }[] = [
  { title: 'Harbour Wall Hornpipe', tones: [...half, ...half.map((t) => ({ ...t, at: t.at + 32 })), ...rest.map((t) => ({ ...t, at: t.at + 32 }))] },
  { title: 'Creel Mender', tones: melody(21, 8, G_MINOR) },
  { title: 'Foghorn Air', tones: melody(31, 8, D_MAJOR) },
  { title: 'Boathouse Polka', tones: melody(41, 8, G_MINOR) },
  { title: 'Low Tide Slide', tones: melody(51, 8, D_MAJOR) },
];

/** SMF 1.0, format 0, 480 ticks a beat, titled by a track name meta event. */
function midiBytes(title: string, tones: readonly Tone[], transpose = 0): Uint8Array {
  const notes = tones.map((t) => ({ onset: t.at / 2, duration: t.length / 2, pitch: t.pitch + transpose }));
  const events = title ? [[0, trackName(title)]] : [];
  return smf({ format: 0, ppq: 480, tracks: [track([...events, ...deltas(noteEvents(notes, { ppq: 480 })), [0, endOfTrack()]])] });
}

/** ABC 2.1 spelling with every accidental written (= for natural), so none carries on through a bar. */
function abcNote(pitch: number): string {
  const [letter, sharp] = [['C', ''], ['C', '^'], ['D', ''], ['D', '^'], ['E', ''], ['F', ''], ['F', '^'], ['G', ''], ['G', '^'], ['A', ''], ['A', '^'], ['B', '']][pitch % 12];
  const octave = Math.floor(pitch / 12) - 1; // C4 = 60
  const name = octave >= 5 ? letter.toLowerCase() + "'".repeat(octave - 5) : letter + ','.repeat(4 - octave);
  return (sharp || '=') + name;
}

/** Tones → ABC body in eighths (L:1/8), rests as z, a bar line every 8 eighths. */
function abcBody(tones: readonly Tone[], from: number, to: number): string {
  let out = '';
  let at = from;
  const put = (s: string, length: number): void => {
    out += s + (length > 1 ? String(length) : '') + ' ';
    at += length;
    if (at % 8 === 0) out += '| ';
  };
  for (const t of tones.filter((t) => t.at >= from && t.at < to)) {
    if (t.at > at) put('z', t.at - at);
    put(abcNote(t.pitch), t.length);
  }
  if (to > at) put('z', to - at);
  return out;
}

function tuneBook(): string {
  const [one, two] = TUNES;
  return [
    '%abc-2.1',
    '',
    `X:1\nT:${one.title}\nM:4/4\nL:1/8\nK:C\n|: ${abcBody(half, 0, 32).replace(/\| $/, '')}:| ${abcBody(rest, 32, 64)}]`,
    '',
    `X:2\nT:${two.title}\nM:4/4\nL:1/8\nK:C\n${abcBody(two.tones, 0, 64)}]`,
    '',
  ].join('\n');
}

/** MusicXML 4.0 partwise, divisions 2 (an eighth is 1); a tone crossing a bar line is split and tied. */
function musicXml(title: string, tones: readonly Tone[]): string {
  const steps = ['C', 'C', 'D', 'D', 'E', 'F', 'F', 'G', 'G', 'A', 'A', 'B'];
  const bars: string[] = Array.from({ length: 8 }, () => '');
  const put = (at: number, length: number, body: string, ties: string[] = []): void => {
    const bar = Math.floor(at / 8);
    const fits = Math.min(length, (bar + 1) * 8 - at);
    const tie = (t: string) => `<tie type="${t}"/>`;
    const tail = fits < length;
    const own = [...ties, ...(tail ? ['start'] : [])];
    bars[bar] += `<note>${body}<duration>${fits}</duration>${body.startsWith('<rest') ? '' : own.map(tie).join('')}</note>`;
    if (tail) put(at + fits, length - fits, body, ['stop']);
  };
  let at = 0;
  for (const t of tones) {
    if (t.at > at) put(at, t.at - at, '<rest/>');
    const alter = [1, 3, 6, 8, 10].includes(t.pitch % 12) ? '<alter>1</alter>' : '';
    put(t.at, t.length, `<pitch><step>${steps[t.pitch % 12]}</step>${alter}<octave>${Math.floor(t.pitch / 12) - 1}</octave></pitch>`);
    at = t.at + t.length;
  }
  if (at < 64) put(at, 64 - at, '<rest/>');
  const head = '<attributes><divisions>2</divisions><key><fifths>0</fifths></key><time><beats>4</beats><beat-type>4</beat-type></time></attributes>';
  const measures = bars.map((b, i) => `<measure number="${i + 1}">${i === 0 ? head : ''}${b}</measure>`).join('\n');
  return `<?xml version="1.0" encoding="UTF-8"?>\n<score-partwise version="4.0"><work><work-title>${title}</work-title></work><part-list><score-part id="P1"><part-name>Melody</part-name></score-part></part-list><part id="P1">${measures}</part></score-partwise>\n`;
}

const run = (...args: string[]) => {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr, json: () => JSON.parse(r.stdout) };
};

interface Window {
  start: number;
  end: number;
  notes: number;
  score: number;
  match: { piece: string; title: string; pieceStart: number; transposition: number; matched: number } | null;
}

/** A report's windows, with each matched piece known by its title (paths differ between the corpora). */
function windows(report: { originality: number; queries: { file: string; windows: Window[] }[] }) {
  return {
    originality: report.originality,
    queries: report.queries.map((q) => ({
      file: q.file,
      windows: q.windows.map((w) => ({ start: w.start, end: w.end, notes: w.notes, score: w.score, match: w.match && { title: w.match.title, pieceStart: w.match.pieceStart, transposition: w.match.transposition, matched: w.match.matched } })),
    })),
  };
}

beforeAll(() => {
  if (!existsSync(CLI)) throw new Error(`${CLI} is missing: build first with npx tsc -p tsconfig.json`);
  for (const d of [asMidi, mixed, queries]) mkdirSync(d);
  // Named so both folders list the tunes in one order: among equal scores a report names the first piece.
  ['1-hornpipe', '2-creel', '3-foghorn', '5-polka', '4-slide'].forEach((name, i) => writeFileSync(join(asMidi, `${name}.mid`), midiBytes(TUNES[i].title, TUNES[i].tones)));
  writeFileSync(join(mixed, 'book.abc'), tuneBook());
  writeFileSync(join(mixed, 'foghorn-air.musicxml'), musicXml(TUNES[2].title, TUNES[2].tones));
  const container = '<?xml version="1.0"?><container><rootfiles><rootfile full-path="polka.musicxml"/></rootfiles></container>';
  writeFileSync(join(mixed, 'polka.mxl'), zipSync({ 'META-INF/container.xml': new TextEncoder().encode(container), 'polka.musicxml': new TextEncoder().encode(musicXml(TUNES[3].title, TUNES[3].tones)) }));
  writeFileSync(join(mixed, 'low-tide-slide.mid'), midiBytes(TUNES[4].title, TUNES[4].tones));
  // Queries: passages of three tunes, moved in pitch, and a tune of no corpus.
  const passage = (tones: Tone[], from: number, to: number) => tones.filter((t) => t.at >= from && t.at < to).map((t) => ({ ...t, at: t.at - from }));
  writeFileSync(join(queries, 'quotes-creel.mid'), midiBytes('', passage(TUNES[1].tones, 8, 56), 3));
  writeFileSync(join(queries, 'quotes-hornpipe.mid'), midiBytes('', passage(TUNES[0].tones, 24, 72), -2));
  writeFileSync(join(queries, 'quotes-foghorn.mid'), midiBytes('', passage(TUNES[2].tones, 16, 64), 0));
  writeFileSync(join(queries, 'fresh.mid'), midiBytes('', melody(99, 6, G_MINOR), 0));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('a corpus of MIDI, MusicXML and ABC files', () => {
  it('gives the report the same tunes as MIDI files give, read file by file', () => {
    const midi = run('report', queries, '--corpus', asMidi, '--json');
    const formats = run('report', queries, '--corpus', mixed, '--json');
    expect(midi.code, midi.err).toBe(0);
    expect(formats.code, formats.err).toBe(0);
    const expected = windows(midi.json());
    expect(windows(formats.json())).toEqual(expected);
    // Not a report that cannot fail: the quotes are found, in the tunes they quote.
    const found = expected.queries.map((q) => [q.file.split('/').pop(), Math.max(...q.windows.map((w) => w.score))]);
    expect(found.filter(([file]) => String(file).startsWith('quotes')).every(([, best]) => Number(best) === 1)).toBe(true);
  });

  it('counts files and pieces per format in corpus build', () => {
    const built = run('corpus', 'build', mixed, '--json');
    expect(built.code, built.err).toBe(0);
    expect(built.json()).toMatchObject({
      pieces: 5,
      skipped: [],
      formats: { midi: { files: 1, pieces: 1, skipped: 0 }, musicxml: { files: 2, pieces: 2, skipped: 0 }, abc: { files: 1, pieces: 2, skipped: 0 } },
    });
    const text = run('corpus', 'build', mixed);
    expect(text.out).toContain('by format: 1 MIDI file (1 piece), 2 MusicXML files (2 pieces), 1 ABC file (2 tunes)');
    expect(text.out).toContain('0 files read, 4 unchanged');
  });

  it('gives the same report through the index, and names a tune of a tune book by its file and X: number', () => {
    run('corpus', 'build', asMidi);
    run('corpus', 'build', mixed);
    const midi = run('report', queries, '--corpus', asMidi, '--json');
    const formats = run('report', queries, '--corpus', mixed, '--json');
    expect(formats.err).not.toMatch(/not using/);
    expect(windows(formats.json())).toEqual(windows(midi.json()));
    const pieces = formats.json().queries.flatMap((q: { windows: Window[] }) => q.windows.map((w) => w.match?.piece));
    expect(pieces).toContain('book.abc#2');
    expect(pieces).toContain('book.abc#1');
  });

  it('sees a changed tune book or a new score file as making the index out of date', () => {
    run('corpus', 'build', mixed);
    writeFileSync(join(mixed, 'book.abc'), tuneBook() + '\nX:3\nT:Added Later\nM:4/4\nL:1/8\nK:C\nCDEF GABc|\n');
    expect(run('report', queries, '--corpus', mixed, '--json').err).toContain('(book.abc is new or changed)');
    const rebuilt = run('corpus', 'build', mixed, '--json').json();
    expect(rebuilt).toMatchObject({ pieces: 6, reparsed: 1, reused: 3 });
    writeFileSync(join(mixed, 'another.xml'), musicXml('Another', TUNES[2].tones));
    expect(run('report', queries, '--corpus', mixed, '--json').err).toContain('(it lists 4 score files, the folder has 5)');
  });

  it('scores one tune of a tune book against a MusicXML score with `score`', () => {
    const r = run('score', join(mixed, 'foghorn-air.musicxml'), join(asMidi, '3-foghorn.mid'), '--json');
    expect(r.code, r.err).toBe(0);
    expect(r.json().score).toBe(1);
    expect(run('score', join(mixed, 'book.abc#2'), join(asMidi, '2-creel.mid'), '--json').json().score).toBe(1);
    const several = run('score', join(mixed, 'book.abc'), join(asMidi, '2-creel.mid'));
    expect(several.code).toBe(2);
    expect(several.err).toMatch(/book.abc: holds 3 tunes \(X: 1, 2, 3\); name one as .*book.abc#1/);
  });
});
