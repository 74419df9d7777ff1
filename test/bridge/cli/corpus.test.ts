/**
 * `earwitness corpus build` and `--corpus` with an index, as a user runs
 * them: the built CLI (`node dist/bridge/cli.js`, so the worker threads run
 * from dist/) on a temporary folder of Standard MIDI Files written with
 * npm's @tonejs/midi.
 *
 * @example
 *   npx tsc -p tsconfig.json && npx vitest run test/bridge/cli/corpus.test.ts
 */
import { spawnSync } from 'node:child_process';
import { copyFileSync, cpSync, existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import tonejs from '@tonejs/midi';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Point, GRAINS_PER_BEAT } from '../../../core/note.js';
import { synthCorpus, unrelated } from '../../bench/synthetic.js';

const { Midi } = tonejs;
const ROOT = join(import.meta.dirname, '../../..');
const CLI = join(ROOT, 'dist/bridge/cli.js');
const dir = mkdtempSync(join(tmpdir(), 'ew-corpus-cli-'));
const corpusDir = join(dir, 'corpus');
const index = join(corpusDir, '.earwitness-index');

/** A type-1 SMF at 480 ticks a beat (SMF 1.0), one track, written by @tonejs/midi. */
function midiFile(file: string, points: readonly Point[], name: string): void {
  const midi = new Midi();
  midi.header.setTempo(120);
  const track = midi.addTrack();
  track.name = name;
  for (const p of points) track.addNote({ midi: p.pitch, ticks: Math.round((p.at / GRAINS_PER_BEAT) * 480), durationTicks: 240, velocity: 0.7 });
  writeFileSync(file, midi.toArray());
}

const run = (...args: string[]) => {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr, json: () => JSON.parse(r.stdout) };
};

const pieces = synthCorpus({ notes: 8_000, seed: 31 });

beforeAll(() => {
  if (!existsSync(CLI)) throw new Error(`${CLI} is missing: build first with npx tsc -p tsconfig.json`);
  spawnSync('mkdir', ['-p', join(corpusDir, 'more')]);
  pieces.forEach((points, i) => midiFile(join(corpusDir, i % 2 ? 'more' : '', `tune-${i}.mid`), points, `Tune ${i}`));
  writeFileSync(join(corpusDir, 'broken.mid'), 'MThd but not really');
  writeFileSync(join(corpusDir, 'empty.midi'), '');
  const passage = pieces[2].filter((p) => p.at >= 16 * GRAINS_PER_BEAT && p.at < 56 * GRAINS_PER_BEAT).map((p) => ({ at: p.at - 16 * GRAINS_PER_BEAT, pitch: p.pitch + 3 }));
  midiFile(join(dir, 'quote.mid'), passage, 'Quote');
  midiFile(join(dir, 'fresh.mid'), unrelated(3, 40), 'Fresh');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('corpus build', () => {
  it('indexes every MIDI file under the folder and lists the ones it skipped, with reasons', () => {
    const r = run('corpus', 'build', corpusDir, '--json');
    expect(r.code).toBe(0);
    const s = r.json();
    expect(s).toMatchObject({ pieces: pieces.length, out: index, reparsed: pieces.length + 2, reused: 0 });
    expect(s.notes).toBe(pieces.flat().length);
    expect(s.skipped).toEqual([
      { file: 'broken.mid', error: expect.stringMatching(/damaged MIDI data|not a Standard MIDI File/) },
      { file: 'empty.midi', error: 'the file is empty' },
    ]);
    expect(typeof s.seconds).toBe('number');
    expect(existsSync(index)).toBe(true);
    // The build's spill files are gone with it.
    expect(readdirSync(corpusDir).filter((name) => name.startsWith('.earwitness-build-'))).toEqual([]);
  });

  it('an unchanged rebuild re-parses nothing; a changed file is read again; a touched but identical one is not', () => {
    const again = run('corpus', 'build', corpusDir, '--json').json();
    expect(again).toMatchObject({ pieces: pieces.length, reparsed: 0, reused: pieces.length + 2 });
    midiFile(join(corpusDir, 'tune-0.mid'), pieces[0].slice(0, 50), 'Tune 0, shorter');
    const later = new Date(Date.now() + 5000);
    utimesSync(join(corpusDir, 'more', 'tune-1.mid'), later, later);
    const changed = run('corpus', 'build', corpusDir, '--json').json();
    expect(changed).toMatchObject({ reparsed: 1, reused: pieces.length + 1 });
    expect(changed.notes).toBe(pieces.flat().length - pieces[0].length + 50);
    midiFile(join(corpusDir, 'tune-0.mid'), pieces[0], 'Tune 0');
    expect(run('corpus', 'build', corpusDir, '--json').json()).toMatchObject({ reparsed: 1, notes: pieces.flat().length });
  });

  it('stops a file that takes longer than --file-seconds, and says so', () => {
    const out = join(dir, 'slow-index');
    const r = run('corpus', 'build', corpusDir, '--out', out, '--file-seconds', '0.001', '--json');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/no readable score file \(MIDI, MusicXML or ABC\) with notes/);
    expect(r.err).toMatch(/skipped more\/tune-1\.mid: took longer than 0\.001 s to read, so it was stopped/);
    expect(existsSync(out)).toBe(false);
    expect(readdirSync(dir).filter((name) => name.startsWith('.earwitness-build-'))).toEqual([]);
  });

  it('refuses a folder that does not exist', () => {
    const r = run('corpus', 'build', join(dir, 'nowhere'));
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/no such folder/);
  });
});

describe('--corpus with an index', () => {
  const windowsOf = (r: { json: () => { queries: { windows: { score: number; match: unknown }[] }[] } }) => r.json().queries.flatMap((q) => q.windows);

  it('the index file and the folder holding it give the same report; --exact agrees wherever it scores ≥ 0.5', () => {
    const viaFile = run('report', 'quote.mid', 'fresh.mid', '--corpus', index, '--json');
    const viaFolder = run('report', 'quote.mid', 'fresh.mid', '--corpus', corpusDir, '--json');
    const exact = run('report', 'quote.mid', 'fresh.mid', '--corpus', corpusDir, '--exact', '--json');
    for (const r of [viaFile, viaFolder, exact]) expect(r.code).toBe(0);
    expect(viaFolder.err).not.toMatch(/not using/);
    expect(windowsOf(viaFile)).toEqual(windowsOf(viaFolder));
    const [ix, ex] = [windowsOf(viaFolder), windowsOf(exact)];
    expect(ix.length).toBe(ex.length);
    let strong = 0;
    ix.forEach((w, i) => {
      expect(w.score).toBeLessThanOrEqual(ex[i].score);
      if (ex[i].score >= 0.5) {
        strong++;
        expect(w).toEqual(ex[i]);
      }
    });
    expect(strong).toBeGreaterThanOrEqual(4);
    expect(viaFolder.json().caution).toMatch(/not a legal finding/);
  });

  it('the demo corpus as a folder, then indexed: report --json the same to the letter, in every mode', () => {
    const demo = join(dir, 'demo');
    cpSync(join(ROOT, 'presets/demo/corpus'), demo, { recursive: true });
    const queries = join(ROOT, 'presets/demo/queries');
    const modes = [[], ['--tolerance', '0.1'], ['--tempo-free']];
    const before = modes.map((m) => run('report', queries, '--corpus', demo, '--json', ...m));
    expect(run('corpus', 'build', demo).code).toBe(0);
    const after = modes.map((m) => run('report', queries, '--corpus', demo, '--json', ...m));
    modes.forEach((_, i) => {
      expect(before[i].code).toBe(0);
      expect(after[i].err).not.toMatch(/not using/);
      expect(after[i].out).toBe(before[i].out);
    });
  });

  it('a folder whose index is out of date is read file by file, with a note saying how to update it', () => {
    copyFileSync(join(dir, 'fresh.mid'), join(corpusDir, 'new.mid'));
    const r = run('report', 'quote.mid', '--corpus', corpusDir, '--json');
    rmSync(join(corpusDir, 'new.mid'));
    expect(r.code).toBe(0);
    expect(r.err).toContain(`not using ${index} (it lists ${pieces.length + 2} score files, the folder has ${pieces.length + 3})`);
    expect(r.err).toContain(`earwitness corpus build ${corpusDir}`);
  });

  it('a truncated or damaged index file is refused, naming the file and how to rebuild it', () => {
    const bytes = readFileSync(index);
    const cut = join(dir, 'cut-index');
    writeFileSync(cut, bytes.subarray(0, bytes.length - 100));
    const r = run('report', 'quote.mid', '--corpus', cut);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(new RegExp(`${cut}: truncated: section \\w+ runs past the end`));
    expect(r.err).toMatch(/rebuild it with: earwitness corpus build/);
    const flipped = Uint8Array.from(bytes);
    flipped[600] ^= 1; // inside the META section, which every reader checks
    writeFileSync(index, flipped);
    const d = run('baseline', '--corpus', index, '--samples', '2');
    writeFileSync(index, bytes);
    expect(d.code).toBe(2);
    expect(d.err).toContain(`${index}: damaged`);
    expect(d.err).toContain(`rebuild it with: earwitness corpus build ${corpusDir}`);
  });

  it('baseline runs through the index, leaving each sampled piece out, like --exact', () => {
    const [ix, ex] = ['', '--exact'].map((flag) => run('baseline', '--corpus', corpusDir, '--samples', '2', '--json', ...(flag ? [flag] : [])));
    expect([ix.code, ex.code]).toEqual([0, 0]);
    expect(ix.json().samples).toEqual(ex.json().samples);
    expect(ix.json().originality).toBeGreaterThanOrEqual(ex.json().originality);
  }, 240_000);
});
