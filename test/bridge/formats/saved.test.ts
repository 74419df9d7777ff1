/**
 * Saved formats checked one way (bridge/formats/saved.ts): each format's one
 * schema, and a damaged or foreign file told the same way everywhere — the
 * file, the field, what was there, what was expected, how to fix it. The
 * files are written by the project's own writers and then damaged by hand,
 * as a crashed disk or a hand edit would.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { flattenNotes, notePoints } from '../../../core/flat-notes.js';
import { buildTriples } from '../../../core/triple-index.js';
import { FINGERPRINT_SHAPE, buildFingerprints } from '../../../core/fingerprint.js';
import { readBaselineFile } from '../../../bridge/formats/baseline-file.js';
import { IndexFileError, readIndexBaselines, readIndexMeta, writeIndexFile } from '../../../bridge/formats/index-file.js';
import { parsePreset } from '../../../bridge/formats/presets.js';
import { readSaved, savedProblem } from '../../../bridge/formats/saved.js';
import { corpusOf, pieceOf } from '../../helpers/corpus.js';
import { notesOf } from '../../helpers/points.js';

const dir = mkdtempSync(join(tmpdir(), 'ew-saved-'));
/** Written by `node dist/bridge/cli.js baseline --corpus presets/demo/corpus --window 8 --hop 4 --json`. */
const BASELINE = join(import.meta.dirname, '../../fixtures/baseline/demo-window-8.json');
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('a problem in words', () => {
  const schema = z.object({
    window: z.number().positive().describe('a positive number of beats'),
    shape: z.object({ partners: z.number().int().optional().describe('a whole number') }),
    list: z.array(z.object({ size: z.number().int() })),
  }).strict();

  it('names the field, quotes what was there and says what the schema allows there', () => {
    expect(savedProblem(schema, { window: -2, shape: {}, list: [] })).toEqual({ field: 'window', got: '-2', expected: 'a positive number of beats', unknown: false });
    expect(savedProblem(schema, { window: 1, shape: { partners: 2.5 }, list: [] })).toMatchObject({ field: 'shape.partners', got: '2.5', expected: 'a whole number' });
  });

  it('says "nothing" for a missing field, falls back on zod\'s words without a description, and names a field the format does not have', () => {
    expect(savedProblem(schema, { shape: {}, list: [] })).toMatchObject({ field: 'window', got: 'nothing' });
    expect(savedProblem(schema, { window: 1, shape: {}, list: [{ size: 'big' }] })).toMatchObject({ field: 'list.0.size', got: '"big"', expected: expect.stringMatching(/expected number/) });
    expect(savedProblem(schema, { window: 1, shape: {}, list: [], extra: true })).toMatchObject({ field: 'extra', unknown: true });
  });

  it('quotes a long value only in part, and gives back the value typed when it fits', () => {
    expect(savedProblem(schema, { window: 'x'.repeat(500), shape: {}, list: [] })!.got.length).toBeLessThan(100);
    expect(readSaved(schema, { window: 1, shape: {}, list: [] }, () => new Error('unused'))).toEqual({ window: 1, shape: {}, list: [] });
    expect(() => readSaved(schema, {}, (p) => new Error(`field ${p.field}`))).toThrow('field window');
  });
});

describe('every saved format, damaged', () => {
  const corpus = corpusOf(['a', 'b', 'c'].map((name, i) => pieceOf(`${name}.mid`, notesOf([[0, 60 + i], [1, 62 + i], [2, 64 + i], [3, 65 + i]]))));
  const notes = flattenNotes(corpus.pieces);
  const postings = { chromatic: buildTriples(notePoints(notes, 'chromatic')) };
  const contents = {
    shape: postings.chromatic.shape,
    fingerprint: FINGERPRINT_SHAPE,
    fingerprints: { chromatic: buildFingerprints(notePoints(notes, 'chromatic')) },
    percussion: false,
    pieces: corpus.pieces.map(({ notes: _, ...info }) => info),
    files: corpus.pieces.map((p) => ({ path: p.path, size: 100, mtimeMs: 1, sha256: null, error: null })),
    notes,
    postings,
  };

  it('an index whose META field is wrong: the file, the section, the field, what was expected, how to rebuild', () => {
    const file = join(dir, 'meta.idx');
    writeIndexFile(file, { ...contents, files: [{ ...contents.files[0], size: 'big' as unknown as number }] });
    expect(() => readIndexMeta(file)).toThrow(IndexFileError);
    expect(() => readIndexMeta(file)).toThrow(`${file}: damaged: the META section's field files.0.size: got "big"; expected a size in bytes; rebuild it with: earwitness corpus build CORPUS_FOLDER --out ${file}`);
  });

  it('an index whose BASE baselines are wrong is refused the same way, where before it was taken on trust', () => {
    const file = join(dir, 'base.idx');
    const { mode: _, ...baseline } = JSON.parse(readFileSync(BASELINE, 'utf8'));
    writeIndexFile(file, { ...contents, baselines: [baseline] });
    expect(readIndexBaselines(file)).toEqual([baseline]);
    writeIndexFile(file, { ...contents, baselines: [{ ...baseline, percentiles: { ...baseline.percentiles, p99: 7 } }] });
    expect(() => readIndexBaselines(file)).toThrow(`${file}: damaged: the BASE section's field baselines.0.percentiles.p99: got 7; expected a number from 0 to 1; rebuild it with`);
  });

  it('a baseline file and a preset: the file, the field, what was there and what is allowed', () => {
    const baseline = JSON.parse(readFileSync(BASELINE, 'utf8'));
    const file = join(dir, 'b.json');
    writeFileSync(file, JSON.stringify({ ...baseline, settings: { ...baseline.settings, hop: -8 } }));
    expect(() => readBaselineFile(file)).toThrow(`--baseline ${file}: field settings.hop: got -8; allowed: a positive number of beats; expected the output of "earwitness baseline --json": save one with`);
    expect(() => parsePreset({ window: 8 }, 'p.json')).toThrow(/^preset p\.json: field "name": got nothing; allowed: a name of letters/);
  });
});
