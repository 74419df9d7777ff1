/**
 * The streaming index writer (bridge/formats/index-build.ts) and its spills
 * (bridge/formats/spill.ts): pieces added a few at a time give back, read
 * through readIndexFile, every array writeIndexFile writes from the same
 * pieces in memory — also when the sorting limit is so small that buckets
 * are cut again and again down to a single key; nothing is left behind; bad
 * input is refused naming what was wrong.
 *
 * @example
 *   npx vitest run test/bridge/formats/index-build.test.ts
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { PITCH_MODES } from '../../../core/note.js';
import { flattenNotes, notePoints } from '../../../core/flat-notes.js';
import { CORPUS_TRIPLES, buildTriples } from '../../../core/triple-index.js';
import { FINGERPRINT_SHAPE, buildFingerprints } from '../../../core/fingerprint.js';
import { type IndexContents, readIndexFile, writeIndexFile } from '../../../bridge/formats/index-file.js';
import { IndexBuilder, buildIndexFile } from '../../../bridge/formats/index-build.js';
import { BucketSpill } from '../../../bridge/formats/spill.js';
import { corpusOf, pieceOf } from '../../helpers/corpus.js';
import { loadChorales } from '../../helpers/jsb.js';
import { sectionTable } from '../../helpers/index-sections.js';

const dir = mkdtempSync(join(tmpdir(), 'ew-index-build-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// Chorales from the open JSB dataset (test/fixtures/jsb), spelled in their estimated keys, so the two pitch dimensions differ.
const corpus = corpusOf(loadChorales().train.slice(0, 30).map((c) => pieceOf(`${c.path}.mid`, c.notes)));
const infos = corpus.pieces.map(({ notes: _, ...info }) => info);
const files = [{ path: 'a.mid', size: 1, mtimeMs: 2, sha256: null, error: null }];

/** Every array an index holds, read back whole. */
function arrays(file: string): Record<string, ArrayLike<number>> {
  const read = readIndexFile(file, PITCH_MODES);
  const out: Record<string, ArrayLike<number>> = {};
  for (const [field, a] of Object.entries(read.notes)) out[`notes.${field}`] = a as ArrayLike<number>;
  for (const mode of PITCH_MODES) {
    for (const [field, a] of Object.entries(read.postings[mode]!)) out[`${mode}.${field}`] = a as ArrayLike<number>;
    const table = (read.fingerprints[mode] as () => Record<string, unknown>)();
    for (const field of ['keys', 'starts', 'anchors', 'codes']) out[`${mode}.fingerprint.${field}`] = table[field] as ArrayLike<number>;
  }
  return out;
}

/** Each section's CRC-32 and length, by tag, off the file's section table: equal for two files holding the same sections in any order. */
const sections = (file: string): Record<string, string> => Object.fromEntries([...sectionTable(readFileSync(file))].map(([tag, e]) => [tag, `${e.crc} ${e.length}`]));

const inMemory = join(dir, 'in-memory');
const notes = flattenNotes(corpus.pieces);
writeIndexFile(inMemory, {
  shape: CORPUS_TRIPLES,
  fingerprint: FINGERPRINT_SHAPE,
  percussion: false,
  pieces: infos,
  files,
  notes,
  postings: Object.fromEntries(PITCH_MODES.map((m) => [m, buildTriples(notePoints(notes, m))])),
  fingerprints: Object.fromEntries(PITCH_MODES.map((m) => [m, buildFingerprints(notePoints(notes, m))])),
});
const expected = arrays(inMemory);

/** The corpus added to a builder `step` pieces at a time. */
function streamed(file: string, step: number, options: { sortBytes?: number; threads?: boolean; threadUrl?: URL } = {}): IndexBuilder {
  const builder = new IndexBuilder(file, { percussion: false, ...options });
  for (let p = 0; p < corpus.pieces.length; p += step) builder.add(infos.slice(p, p + step), flattenNotes(corpus.pieces.slice(p, p + step)));
  return builder;
}

describe('an index written streamed', () => {
  it('holds what the in-memory writer writes from the same pieces, its pieces and files too', async () => {
    const file = join(dir, 'streamed');
    const built = await streamed(file, 4).finish({ files });
    expect(built).toEqual({ pieces: 30, notes: notes.at.length, points: { chromatic: notePoints(notes, 'chromatic').at.length, morphetic: notePoints(notes, 'morphetic').at.length } });
    expect(arrays(file)).toEqual(expected);
    // Every section, the pieces' checksums and the point offsets among them.
    expect(Object.keys(sections(file))).toEqual(expect.arrayContaining(['NPCK', 'CPOF', 'MPOF']));
    expect(sections(file)).toEqual(sections(inMemory));
    const read = readIndexFile(file, []);
    expect(read.pieces).toEqual(infos);
    expect(read.files).toEqual(files);
  });

  it('holds the same when its buckets must be cut down to single keys to stay within the sorting limit', async () => {
    const file = join(dir, 'small-limit');
    // 200 bytes: 7 triple records at once, far fewer than share the commonest key.
    await streamed(file, 1, { sortBytes: 200 }).finish({ files });
    expect(arrays(file)).toEqual(expected);
  });

  it('holds the same when each pitch dimension is written in a thread of its own, and tells the progress of both', async () => {
    const file = join(dir, 'threads');
    const told: [number, number][] = [];
    // The thread's code as built: these tests run from the sources.
    const threadUrl = new URL('../../../dist/bridge/formats/pitch-tables-worker.js', import.meta.url);
    await streamed(file, 5, { threads: true, threadUrl }).finish({ files }, (done, total) => told.push([done, total]));
    expect(arrays(file)).toEqual(expected);
    const total = told[0][1];
    expect(told.map(([done]) => done)).toEqual([...told.map(([done]) => done)].sort((a, b) => a - b));
    expect(told[told.length - 1]).toEqual([total, total]);
  });

  it('fails naming the pitch dimension when a table thread cannot run, leaving neither spills nor a part-written index', async () => {
    const place = mkdtempSync(join(dir, 'no-thread-'));
    const builder = new IndexBuilder(join(place, 'index'), { percussion: false, threads: true, threadUrl: new URL('file:///nowhere/pitch-tables-worker.js') });
    builder.add(infos.slice(0, 3), flattenNotes(corpus.pieces.slice(0, 3)));
    await expect(builder.finish({ files })).rejects.toThrow(/writing the (chromatic|morphetic) tables: .*nowhere/);
    expect(readdirSync(place)).toEqual([]);
  });

  it('leaves no spill behind, finished or given up', () => {
    const before = readdirSync(dir).filter((f) => f.startsWith('.earwitness-build-'));
    expect(before).toEqual([]);
    const builder = streamed(join(dir, 'given-up'), 10);
    expect(readdirSync(dir).filter((f) => f.startsWith('.earwitness-build-'))).toHaveLength(1);
    builder.abort();
    expect(readdirSync(dir).filter((f) => f.startsWith('.earwitness-build-'))).toEqual([]);
    expect(existsSync(join(dir, 'given-up'))).toBe(false);
  });

  it('removes the spill folders of builds whose process is gone, and only those', () => {
    const place = mkdtempSync(join(dir, 'stale-'));
    const gone = spawnSync(process.execPath, ['-e', '0']).pid!;
    const [stale, living] = [join(place, `.earwitness-build-${gone}-abc123`), join(place, `.earwitness-build-${process.ppid}-def456`)];
    mkdirSync(stale);
    mkdirSync(living);
    writeFileSync(join(stale, 'chromatic-triples'), 'spilled');
    const builder = new IndexBuilder(join(place, 'index'), { percussion: false });
    builder.abort();
    expect(builder.staleRemoved).toEqual([stale]);
    expect(existsSync(stale)).toBe(false);
    expect(existsSync(living)).toBe(true);
  });

  it('refuses notes that do not match the pieces given with them', async () => {
    const builder = new IndexBuilder(join(dir, 'bad'), { percussion: false });
    try {
      expect(() => builder.add(infos.slice(0, 2), flattenNotes(corpus.pieces.slice(0, 3)))).toThrow(/2 pieces given with notes for 3/);
      const one = flattenNotes(corpus.pieces.slice(0, 1));
      expect(() => builder.add(infos.slice(0, 1), { ...one, offsets: Uint32Array.of(0, 5) })).toThrow(/offsets run from 0 to 5; expected 0 to \d+/);
    } finally {
      builder.abort();
    }
    await expect(builder.finish({ files })).rejects.toThrow(/already finished/);
  });

  it('reads back as one written from pieces at hand (buildIndexFile)', async () => {
    const file = join(dir, 'at-hand');
    await buildIndexFile(file, { pieces: infos, notes, files, percussion: false });
    expect(arrays(file)).toEqual(expected);
  });
});

describe('a bucket spill', () => {
  it('hands back one key’s records in the order they came, a chunk at a time, when they pass the limit', () => {
    const spill = new BucketSpill(join(dir, 'one-key'), { halves: 1, fields: ['u32'] });
    const n = 10_000;
    spill.add({ hi: new Uint32Array(n).fill(0x123456), lo: null, fields: [Uint32Array.from({ length: n }, (_, i) => i)] });
    spill.add({ hi: Uint32Array.of(1), lo: null, fields: [Uint32Array.of(n)] });
    const parts = [...spill.sorted(100)];
    spill.remove();
    expect(parts.length).toBeGreaterThan(2);
    expect(parts.every((p) => p.hi.length <= 4096)).toBe(true);
    expect(parts.flatMap((p) => [...p.fields[0]])).toEqual([n, ...Array.from({ length: n }, (_, i) => i)]);
    expect(existsSync(join(dir, 'one-key'))).toBe(false);
  });

  it('takes no records once read', () => {
    const spill = new BucketSpill(join(dir, 'read'), { halves: 2, fields: [] });
    [...spill.sorted(10)];
    expect(() => spill.add({ hi: Uint32Array.of(1), lo: Uint32Array.of(1), fields: [] })).toThrow(/added after the spill was read/);
    spill.remove();
  });
});
