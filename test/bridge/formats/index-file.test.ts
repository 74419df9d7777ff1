/**
 * The corpus index file (bridge/formats/index-file.ts, its format in
 * bridge/formats/index-file.md) and the flat note arrays it stores (core/flat-notes.ts): a round
 * trip gives back every array and piece; a truncated, damaged, foreign or
 * future file gets an error naming the file and saying how to rebuild.
 *
 * @example
 *   npx vitest run test/bridge/formats/index-file.test.ts
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { PITCH_MODES, toGrains } from '../../../core/note.js';
import { barBeat } from '../../../core/bars.js';
import { corpusPoints } from '../../../core/corpus.js';
import { flattenNotes, joinNotes, notePoints, pieceNotes } from '../../../core/flat-notes.js';
import { buildTriples, flattenPoints } from '../../../core/triple-index.js';
import { type IndexContents, INDEX_NAME, IndexFileError, readIndexFile, readIndexMeta, writeIndexFile } from '../../../bridge/formats/index-file.js';
import { openCorpus } from '../../../bridge/corpus/open-corpus.js';
import { notesWithin } from '../../../core/review.js';
import { UsageError } from '../../../bridge/formats/user-error.js';
import { corpusOf, pieceOf } from '../../helpers/corpus.js';
import { loadChorales } from '../../helpers/jsb.js';
import { type FingerprintTable, type StoredFingerprints, FINGERPRINT_SHAPE, buildFingerprints } from '../../../core/fingerprint.js';
import { windowMatcher } from '../../../core/pipeline.js';
import { played } from '../../helpers/material.js';
import { sectionTable } from '../../helpers/index-sections.js';

const dir = mkdtempSync(join(tmpdir(), 'ew-index-file-'));
const postingsOf = (c: IndexContents) => c.postings.chromatic!;
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// Chorales from the open JSB dataset (test/fixtures/jsb), spelled in their estimated keys, so morphetic pitches differ from chromatic ones.
const corpus = corpusOf(loadChorales().train.slice(0, 12).map((c) => pieceOf(`${c.path}.mid`, c.notes)));
const notes = flattenNotes(corpus.pieces);

function contents(): IndexContents {
  const postings = Object.fromEntries(PITCH_MODES.map((m) => [m, buildTriples(notePoints(notes, m))]));
  const fingerprints = Object.fromEntries(PITCH_MODES.map((m) => [m, buildFingerprints(notePoints(notes, m))]));
  return {
    shape: postings.chromatic.shape,
    fingerprint: FINGERPRINT_SHAPE,
    fingerprints,
    percussion: false,
    // The first piece has a metre (a pickup, then 3/4); the rest none, as an index written before metres were kept.
    pieces: corpus.pieces.map(({ notes: _, ...info }, i) => (i === 0 ? { ...info, meter: [{ beat: 0, numerator: 1, denominator: 4 }, { beat: 1, numerator: 3, denominator: 4 }] } : info)),
    files: corpus.pieces.map((p, i) => ({ path: p.path, size: 100 + i, mtimeMs: 1_700_000_000_000 + i, sha256: 'ab'.repeat(32), error: null })),
    notes,
    postings,
  };
}

describe('flat notes', () => {
  it('give the same point sets as toPoints, in both pitch dimensions', () => {
    for (const mode of PITCH_MODES) expect(notePoints(notes, mode)).toEqual(flattenPoints(corpusPoints(corpus, mode)));
  });

  it('give back each piece’s notes on the grain grid, and join pieces in any order', () => {
    expect(pieceNotes(notes, 3)).toEqual(corpus.pieces[3].notes);
    const joined = joinNotes([{ notes, piece: 5 }, { notes, piece: 2 }]);
    expect([pieceNotes(joined, 0), pieceNotes(joined, 1)]).toEqual([pieceNotes(notes, 5), pieceNotes(notes, 2)]);
  });

  it('give back a span of a piece’s notes, ontimes in [from, to), as the whole piece’s notes filtered', () => {
    const whole = pieceNotes(notes, 3);
    for (const [from, to] of [[0, 4], [2.5, 9], [7, 7], [-1, 1e6], [1e5, 1e6]]) {
      const inSpan = whole.filter((n) => toGrains(n.onset) >= toGrains(from) && toGrains(n.onset) < toGrains(to));
      expect(pieceNotes(notes, 3, { fromGrains: toGrains(from), toGrains: toGrains(to) })).toEqual(inSpan);
    }
  });

  it('reject a note the arrays cannot hold, naming the piece', () => {
    expect(() => flattenNotes([{ path: 'odd.mid', notes: [{ onset: 0, duration: 1, pitch: 200, morph: 60, velocity: 80, channel: 1 }] }])).toThrow(/odd\.mid: a note .*pitch 200/);
  });
});

describe('index file', () => {
  const file = join(dir, INDEX_NAME);
  const written = contents();
  writeIndexFile(file, written);

  it('round trip: pieces, fingerprints, notes and the postings of each pitch dimension come back equal', () => {
    const back = readIndexFile(file, ['chromatic', 'morphetic']);
    expect(back.pieces).toEqual(written.pieces);
    expect(back.files).toEqual(written.files);
    expect(back.notes).toEqual(written.notes);
    for (const mode of PITCH_MODES) {
      const [a, b] = [back.postings[mode]!, written.postings[mode]!];
      expect([a.keys, a.starts, a.anchors]).toEqual([b.keys, b.starts, b.anchors]);
    }
    expect(readIndexMeta(file).notes).toBe(notes.at.length);
    for (const mode of PITCH_MODES) {
      const stored = (back.fingerprints[mode] as () => FingerprintTable)();
      expect(stored).toEqual(written.fingerprints[mode]);
    }
  });

  it('tempo-free matching reads the stored fingerprint table, and finds a chorale phrase played half as slow again through it', () => {
    // Arzt, Böck & Widmer (2012), ISMIR: triples keyed by pitch intervals and the ratio of inter-onset intervals survive a change of tempo.
    const back = readIndexFile(file, ['chromatic']);
    let reads = 0;
    const stored = back.fingerprints.chromatic as () => FingerprintTable;
    const table = (): FingerprintTable => (reads++, stored());
    const flat = notePoints(back.notes, 'chromatic');
    const matcher = windowMatcher({ flat, fingerprints: table }, { windowBeats: 16, mode: { tolerance: 0, tempoFree: true }, candidates: 'every', distinctiveness: false });
    expect(reads).toBe(1);
    const phrase = corpus.pieces[7].notes.filter((n) => n.onset >= 8 && n.onset < 24).map((n) => ({ ...n, onset: n.onset - 8 }));
    const slower = flattenPoints(corpusPoints(corpusOf([pieceOf('take.mid', played(phrase, { scale: 1.5, seed: 3 }))]), 'chromatic'));
    const points = Array.from(slower.at.subarray(0, slower.offsets[1]), (at, i) => ({ at, pitch: slower.pitch[i] })).filter((p) => p.at < 16 * 3840);
    const m = matcher.best({ points, startGrains: 0 })!;
    expect(m).toMatchObject({ piece: 7, transposition: 0 });
    expect(Math.abs(m.pieceStart - 8)).toBeLessThan(0.25);
    expect(Math.abs(m.timeScale! / 1.5 - 1)).toBeLessThan(0.02);
  });

  it('keeps each piece\'s time signatures; a piece stored without any reads without, counting in 4/4', () => {
    const back = readIndexFile(file, ['chromatic']);
    expect(back.pieces[0].meter).toEqual(written.pieces[0].meter);
    expect(back.pieces[1].meter).toBeUndefined();
    expect(barBeat(back.pieces[0].meter ?? [], 4)).toEqual({ bar: 2, beatInBar: 1 });
    expect(barBeat(back.pieces[1].meter ?? [], 4)).toEqual({ bar: 2, beatInBar: 1 });
    expect(barBeat(back.pieces[0].meter ?? [], 0)).toEqual({ bar: 0, beatInBar: 1 });
  });

  it('reads one pitch dimension alone', () => {
    const back = readIndexFile(file, ['morphetic']);
    expect(back.postings.chromatic).toBeUndefined();
    expect(back.postings.morphetic!.anchors).toEqual(written.postings.morphetic!.anchors);
  });

  const bytes = readFileSync(file);
  const broken = (name: string, data: Uint8Array): string => {
    const f = join(dir, name);
    writeFileSync(f, data);
    return f;
  };
  const failure = (f: string): IndexFileError => {
    try {
      const back = readIndexFile(f, ['chromatic', 'morphetic']);
      for (const mode of PITCH_MODES) (back.fingerprints[mode] as () => FingerprintTable)();
    } catch (e) {
      return e as IndexFileError;
    }
    throw new Error('no error');
  };

  it('a truncated file: names the file, says truncated, tells how to rebuild', () => {
    for (const cut of [10, 200, bytes.length - 9]) {
      const f = broken(`cut-${cut}`, bytes.subarray(0, cut));
      const e = failure(f);
      expect(e).toBeInstanceOf(IndexFileError);
      expect(e.message).toContain(f);
      expect(e.message).toMatch(/truncated/);
      expect(e.message).toMatch(/rebuild it with: earwitness corpus build/);
    }
  });

  it('a flipped byte anywhere in a section fails that section’s checksum', () => {
    // Inside the META section, the middle of the notes, the last posting.
    for (const at of [400, Math.floor(bytes.length / 2), bytes.length - 3]) {
      const damaged = Uint8Array.from(bytes);
      damaged[at] ^= 0x40;
      const e = failure(broken(`flip-${at}`, damaged));
      expect(e.message).toMatch(/damaged: .*checksum/);
    }
  });

  it('a foreign file, or one of a later format version, is named as such', () => {
    expect(failure(broken('foreign.mid', readFileSync(join(import.meta.dirname, '../../fixtures/midi/format0-ppq96.mid')))).message).toMatch(/not an earwitness corpus index/);
    const later = Uint8Array.from(bytes);
    later[8] = 3;
    expect(failure(broken('later', later)).message).toMatch(/index format version 3; this earwitness reads version 2/);
    // A file written before the fingerprint tables were stored: refused, with how to rebuild it.
    const older = Uint8Array.from(bytes);
    older[8] = 1;
    expect(failure(broken('older', older)).message).toMatch(/index format version 1, written by an older earwitness; this earwitness reads version 2; rebuild it with: earwitness corpus build/);
    expect(failure(join(dir, 'missing')).message).toMatch(/cannot be read \(ENOENT\)/);
  });

  /** Where a section's bytes start in an index file, from its section table. */
  const sectionAt = (data: Uint8Array, tag: string): number => {
    const entry = sectionTable(data).get(tag);
    if (!entry) throw new Error(`no section ${tag}`);
    return entry.offset;
  };

  it('deferred notes: onsets and the asked-for pitch at once, the rest read and checked on first use, equal to what was written', () => {
    const back = readIndexFile(file, ['chromatic'], { deferNotes: true });
    expect(Object.getOwnPropertyDescriptor(back.notes, 'at')!.value).toEqual(written.notes.at);
    expect(Object.getOwnPropertyDescriptor(back.notes, 'pitch')!.value).toEqual(written.notes.pitch);
    for (const field of ['duration', 'morph', 'velocity', 'channel']) expect(Object.getOwnPropertyDescriptor(back.notes, field)!.get).toBeTypeOf('function');
    expect(pieceNotes(back.notes, 3)).toEqual(corpus.pieces[3].notes);
    expect(back.notes).toEqual(written.notes);
    expect(notePoints(readIndexFile(file, ['chromatic'], { deferNotes: true }).notes, 'morphetic')).toEqual(notePoints(notes, 'morphetic'));
  });

  it('a damaged deferred section is refused when first used, naming the section and how to rebuild; read at once, it is refused at once', () => {
    const damaged = Uint8Array.from(bytes);
    damaged[sectionAt(bytes, 'NVEL') + 5] ^= 0x40;
    const f = broken('flip-velocity', damaged);
    const back = readIndexFile(f, ['chromatic'], { deferNotes: true });
    expect(back.notes.at).toEqual(written.notes.at);
    expect(() => pieceNotes(back.notes, 0)).toThrow(IndexFileError);
    expect(() => back.notes.velocity).toThrow(`${f}: damaged: section NVEL fails its checksum; rebuild it with: earwitness corpus build CORPUS_FOLDER --out ${f}`);
    expect(failure(f).message).toMatch(/damaged: section NVEL fails its checksum/);
    expect(() => openCorpus(f).corpus.pieces[0].notes).toThrow(UsageError);
    expect(() => openCorpus(f).notesIn(0, { fromGrains: 0, toGrains: toGrains(1) })).toThrow(UsageError);
  });

  it('an opened index reads a span of a piece’s notes without making the piece’s, as the piece’s own notes give it', () => {
    const opened = openCorpus(file);
    const span = { fromGrains: toGrains(4), toGrains: toGrains(12) };
    const fromSpan = opened.notesIn(5, span);
    expect(fromSpan.length).toBeGreaterThan(0);
    expect(fromSpan).toEqual(notesWithin(openCorpus(file).corpus.pieces[5].notes, span));
    expect(fromSpan).toEqual(notesWithin(corpus.pieces[5].notes, span));
  });

  it('a deferred section of a file replaced since it was opened is refused, not mixed with what was read', () => {
    const f = broken('replaced', bytes);
    const back = readIndexFile(f, ['chromatic'], { deferNotes: true });
    writeIndexFile(f, { ...written, pieces: written.pieces.slice(0, 11), files: written.files.slice(0, 11), notes: joinNotes(written.pieces.slice(0, 11).map((_, piece) => ({ notes, piece }))) });
    expect(() => back.notes.duration).toThrow(/replaced since it was opened \(its section table differs\), so its NDUR section no longer belongs with what was read; open it again; rebuild it with/);
  });

  /** Every key's run of a stored array, read through `runs`. */
  const everyRun = (starts: Uint32Array, runs: (from: number, to: number) => Uint32Array | Uint8Array): number[] => {
    const out: number[] = [];
    for (let k = 0; k + 1 < starts.length; k++) out.push(...runs(starts[k], starts[k + 1]));
    return out;
  };

  it('on demand: each key\'s postings and fingerprints, read a run at a time through the open file, are the stored ones', () => {
    const back = readIndexFile(file, ['chromatic', 'morphetic'], { onDemand: true });
    for (const mode of PITCH_MODES) {
      const postings = back.postings[mode]!;
      expect(postings.anchors).toBeTypeOf('function');
      expect(everyRun(postings.starts, postings.anchors as (from: number, to: number) => Uint32Array)).toEqual([...written.postings[mode]!.anchors]);
      const table = (back.fingerprints[mode] as () => StoredFingerprints)();
      const stored = written.fingerprints[mode] as FingerprintTable;
      expect([table.keys, table.starts]).toEqual([stored.keys, stored.starts]);
      expect(everyRun(table.starts, table.anchors as (from: number, to: number) => Uint32Array)).toEqual([...stored.anchors]);
      expect(everyRun(table.starts, table.codes as (from: number, to: number) => Uint8Array)).toEqual([...stored.codes]);
    }
    expect(() => (postingsOf(back).anchors as (from: number, to: number) => Uint32Array)(5, 4)).toThrow(RangeError);
  });

  it('on demand: a file rebuilt over it after opening is still read as it was when opened', () => {
    const f = broken('rebuilt-on-demand', bytes);
    const back = readIndexFile(f, ['chromatic'], { onDemand: true });
    writeIndexFile(f, { ...written, postings: { chromatic: buildTriples(notePoints(joinNotes([{ notes, piece: 1 }]), 'chromatic')), morphetic: written.postings.morphetic }, pieces: written.pieces.slice(1, 2), files: written.files.slice(1, 2), notes: joinNotes([{ notes, piece: 1 }]) });
    expect(everyRun(postingsOf(back).starts, postingsOf(back).anchors as (from: number, to: number) => Uint32Array)).toEqual([...written.postings.chromatic!.anchors]);
  });

  it('on demand: a posting naming a note the index does not hold is refused when its key is first read, naming the section and how to rebuild', () => {
    const damaged = Uint8Array.from(bytes);
    const last = sectionAt(bytes, 'CANC') + 4 * (written.postings.chromatic!.anchors.length - 1);
    damaged.set([0xff, 0xff, 0xff, 0x7f], last);
    const f = broken('posting-past-the-end', damaged);
    const back = readIndexFile(f, ['chromatic'], { onDemand: true });
    const { starts } = postingsOf(back);
    const runs = postingsOf(back).anchors as (from: number, to: number) => Uint32Array;
    expect(runs(starts[0], starts[1])).toEqual(written.postings.chromatic!.anchors.subarray(starts[0], starts[1]));
    expect(() => everyRun(starts, runs)).toThrow(`${f}: damaged: entry ${written.postings.chromatic!.anchors.length - 1} of section CANC names note 2147483647, but the index holds ${notes.at.length} notes; rebuild it with`);
  });

  it('in the default place, the message names the folder to rebuild', () => {
    const f = join(dir, 'sub', INDEX_NAME);
    expect(new IndexFileError(f, 'damaged').message).toBe(`${f}: damaged; rebuild it with: earwitness corpus build ${join(dir, 'sub')}`);
  });
});
