/**
 * An index read a piece at a time (bridge/formats/index-file.ts, `onDemand`
 * on a file holding each piece's checksums): opening reads no note; every
 * path that reads a piece's points or notes (index candidates, the scan of
 * short windows, every translation, distinctiveness, tempo-free votes, the
 * live matcher, excerpts) gives what the same index read whole gives; a
 * piece whose stored notes are damaged is refused when touched, naming it;
 * a file without the per-piece checksums (written before they were stored)
 * is read whole, as before.
 *
 * Material: JSB chorales from the open dataset (test/fixtures/jsb, source in
 * its README), 40 as the corpus and held-out ones as fresh playing.
 *
 * @example
 *   npx vitest run test/bridge/formats/piecewise-read.test.ts
 */
import { closeSync, copyFileSync, mkdtempSync, openSync, readFileSync, readSync, rmSync, writeFileSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { crc32 } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { type PitchMode, type Point, toGrains, toPoints } from '../../../core/note.js';
import { flattenNotes } from '../../../core/flat-notes.js';
import { windows } from '../../../core/windows.js';
import { type MatchMode, windowMatcher } from '../../../core/pipeline.js';
import { LiveMatcher } from '../../../core/live-match.js';
import { buildIndexFile } from '../../../bridge/formats/index-build.js';
import { IndexFileError, readIndexFile } from '../../../bridge/formats/index-file.js';
import { type OpenedCorpus, openCorpus } from '../../../bridge/corpus/open-corpus.js';
import { chorales, passage } from '../../helpers/material.js';
import { sectionTable } from '../../helpers/index-sections.js';

const dir = mkdtempSync(join(tmpdir(), 'ew-piecewise-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const { corpus, heldOut } = chorales();
const infos = corpus.pieces.map(({ notes: _, ...info }) => info);
const file = join(dir, 'index');
await buildIndexFile(file, { pieces: infos, notes: flattenNotes(corpus.pieces), files: [], percussion: false });

/** A copy of the index whose table no longer names the per-piece checksums (as a file written before them), its table's CRC made good. */
function withoutPieceChecks(path: string): string {
  const bytes = readFileSync(path);
  const entry = sectionTable(bytes).get('NPCK')!.entry;
  bytes.write('XPCK', entry, 'latin1');
  bytes.writeUInt32LE(crc32(bytes.subarray(24, 24 + 24 * bytes.readUInt32LE(12))), 16);
  const out = join(dir, `whole-${Math.random().toString(36).slice(2)}`);
  writeFileSync(out, bytes);
  return out;
}

const MODES: [string, MatchMode][] = [
  ['exact', { tolerance: 0, tempoFree: false }],
  ['tolerance 0.1', { tolerance: 0.1, tempoFree: false }],
  ['tempo-free', { tolerance: 0.1, tempoFree: true }],
];

/** Windows to match: held-out playing, corpus passages moved and transposed, and short ones the index scans. */
function probes(mode: PitchMode): { points: Point[]; startGrains: number }[] {
  const out: { points: Point[]; startGrains: number }[] = [];
  const add = (points: Point[], beats: number): void => {
    for (const w of windows(points, { window: beats, hop: beats })) out.push({ points: w.points, startGrains: toGrains(w.start) });
  };
  for (const piece of heldOut.slice(0, 1)) add(toPoints(piece.notes, mode), 8);
  for (const p of [2, 17, 33]) add(toPoints(passage(corpus.pieces[p].notes, 4, 12).map((n) => ({ ...n, pitch: n.pitch + 2, morph: n.morph + 1 })), mode), 8);
  for (const p of [5, 21]) out.push({ points: toPoints(passage(corpus.pieces[p].notes, 0, 2), mode).slice(0, 6), startGrains: 0 });
  return out;
}

/**
 * Every mode's answers on the probes, through the index's candidates and
 * through every translation, with distinctiveness; each probe on the corpus
 * opened afresh, so whatever path it takes is the first to touch the pieces
 * it reads.
 */
function answers(open: () => OpenedCorpus, mode: PitchMode): unknown[] {
  return MODES.flatMap(([, m]) =>
    // Every translation tempo-free is the slow reference: the index's candidates are what that mode reads pieces through.
    (m.tempoFree ? (['index'] as const) : (['index', 'every'] as const)).flatMap((candidates) =>
      probes(mode).map((p) => windowMatcher(open().matchCorpus(mode), { windowBeats: 8, mode: m, candidates, distinctiveness: true }).best(p)),
    ),
  );
}

describe('an index read a piece at a time', () => {
  it('opening reads no note: the points stay empty until a piece is touched, and then only the pieces touched are read', () => {
    const opened = openCorpus(file);
    const flat = opened.matchCorpus('chromatic').flat;
    expect(flat.ensure).toBeTypeOf('function');
    expect(flat.pitch.every((p) => p === 0)).toBe(true);
    flat.ensure!(7);
    const [from, to] = [flat.offsets[7], flat.offsets[8]];
    expect(Array.from(flat.pitch.subarray(from, to))).toEqual(toPoints(corpus.pieces[7].notes, 'chromatic').map((p) => p.pitch));
    expect(Array.from(flat.at.subarray(from, to))).toEqual(toPoints(corpus.pieces[7].notes, 'chromatic').map((p) => p.at));
    expect(flat.pitch.subarray(0, from).every((p) => p === 0) && flat.pitch.subarray(to).every((p) => p === 0)).toBe(true);
  });

  it.each(['chromatic', 'morphetic'] as const)('%s: every mode, index candidates and every translation, with distinctiveness, as the index read whole', (mode) => {
    const wholeFile = withoutPieceChecks(file);
    expect(openCorpus(wholeFile).matchCorpus(mode).flat.ensure).toBeUndefined();
    const expected = answers(() => openCorpus(wholeFile, { pitch: mode }), mode);
    const got = answers(() => openCorpus(file, { pitch: mode }), mode);
    expect(got).toEqual(expected);
    // Not a comparison of two empty answers: the corpus passages are found.
    expect(expected.filter((m) => (m as { score: number } | null)?.score === 1).length).toBeGreaterThanOrEqual(5 * 3);
  });

  it('the live matcher, warmed up and played a held-out chorale with a corpus passage spliced in, answers as over the index read whole', () => {
    const played = [...heldOut[4].notes.filter((n) => n.onset < 12), ...passage(corpus.pieces[11].notes, 8, 24, 12)];
    const run = (opened: OpenedCorpus): unknown[] => {
      const live = new LiveMatcher(opened.matchCorpus('chromatic'), { windowBeats: 16, mode: { tolerance: 0.1, tempoFree: false } });
      live.warmUp();
      const window: Point[] = [];
      return toPoints(played, 'chromatic').map((p) => {
        window.push(p);
        while (window[0].at <= p.at - toGrains(16)) window.shift();
        live.add(p);
        live.expire(window[0].at);
        return live.best({ points: [...window], startGrains: window[0].at });
      });
    };
    const expected = run(openCorpus(withoutPieceChecks(file)));
    expect(run(openCorpus(file))).toEqual(expected);
    expect(expected.some((m) => (m as { piece: number; score: number } | null)?.piece === 11 && (m as { score: number }).score === 1)).toBe(true);
  });

  it("excerpts and a piece's notes are read from the file as they were stored", () => {
    const opened = openCorpus(file);
    expect(opened.corpus.pieces[9].notes).toEqual(openCorpus(withoutPieceChecks(file)).corpus.pieces[9].notes);
    expect(opened.notesIn(30, { fromGrains: toGrains(4), toGrains: toGrains(8) })).toEqual(openCorpus(withoutPieceChecks(file)).notesIn(30, { fromGrains: toGrains(4), toGrains: toGrains(8) }));
  });

  it('a piece whose stored onsets are damaged is refused when it is touched, naming it and the section; the others read as before', () => {
    const damaged = join(dir, 'damaged');
    copyFileSync(file, damaged);
    const nats = sectionTable(readFileSync(damaged)).get('NATS')!;
    const offsets = readIndexFile(file, []).notes.offsets;
    const fd = openSync(damaged, 'r+');
    const at = nats.offset + 4 * (offsets[3] + 2);
    const byte = Buffer.alloc(1);
    readSync(fd, byte, 0, 1, at);
    writeSync(fd, Buffer.of(byte[0] ^ 0x40), 0, 1, at);
    closeSync(fd);
    const opened = openCorpus(damaged);
    const flat = opened.matchCorpus('chromatic').flat;
    expect(() => flat.ensure!(2)).not.toThrow();
    expect(() => flat.ensure!(3)).toThrow(IndexFileError);
    expect(() => flat.ensure!(3)).toThrow(/damaged: piece 4's entries of section NATS fail their checksum; rebuild it with: earwitness corpus build/);
    expect(() => opened.notesIn(3, { fromGrains: 0, toGrains: toGrains(4) })).toThrow(/piece 4's entries of section NATS/);
  });
});
