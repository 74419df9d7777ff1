/**
 * `corpus build DIR --shards K` and `--corpus MANIFEST` opened in one
 * process, as a user runs them (the built CLI): the --json shape, shards of
 * similar note counts, and report, baseline and check equal to the one
 * index of the same corpus, window for window, on the invented demo corpus
 * (presets/demo). A shard file rebuilt since the manifest is refused.
 *
 * @example
 *   npx tsc -p tsconfig.json && npx vitest run test/bridge/corpus/shards.test.ts
 */
import { spawnSync } from 'node:child_process';
import { cpSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CLI, ROOT, tempDir } from '../../helpers/daemon.js';

const dir = tempDir('shards');
const corpus = join(dir, 'corpus');
const manifest = join(corpus, '.earwitness-shards.json');
const index = join(corpus, '.earwitness-index');
const queries = join(ROOT, 'presets/demo/queries');

const run = (...args: string[]) => {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', cwd: dir });
  return { code: r.status, out: r.stdout, err: r.stderr, json: () => JSON.parse(r.stdout) };
};

beforeAll(() => {
  cpSync(join(ROOT, 'presets/demo/corpus'), corpus, { recursive: true });
  expect(run('corpus', 'build', corpus).code).toBe(0);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('corpus build --shards', () => {
  it('writes K index files of similar note counts and a manifest; --json tells them', () => {
    const r = run('corpus', 'build', corpus, '--shards', '3', '--json');
    expect(r.code, r.err).toBe(0);
    const built = r.json();
    expect(Object.keys(built)).toEqual(['manifest', 'shards', 'pieces', 'notes', 'skipped', 'seconds']);
    expect(built.manifest).toBe(manifest);
    expect(built.shards).toHaveLength(3);
    for (const s of built.shards) expect(Object.keys(s)).toEqual(['path', 'pieces', 'notes']);
    expect(built.shards.reduce((n: number, s: { pieces: number }) => n + s.pieces, 0)).toBe(built.pieces);
    expect(built.shards.reduce((n: number, s: { notes: number }) => n + s.notes, 0)).toBe(built.notes);
    const notes = built.shards.map((s: { notes: number }) => s.notes);
    // Similar: no shard holds more than half as much again as another.
    expect(Math.max(...notes) / Math.min(...notes)).toBeLessThan(1.5);
    expect(JSON.parse(readFileSync(manifest, 'utf8')).shards.map((s: { path: string }) => s.path)).toEqual(['.earwitness-shard-1-of-3', '.earwitness-shard-2-of-3', '.earwitness-shard-3-of-3']);
  });

  it('refuses more shards than pieces', () => {
    const r = run('corpus', 'build', corpus, '--shards', '99', '--out', join(dir, 'many.json'));
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--shards 99: the corpus has only 12 pieces/);
  });
});

describe('--corpus MANIFEST, every shard in this process', () => {
  const same = (...args: string[]) => {
    const one = run(...args, '--corpus', index, '--json');
    const shards = run(...args, '--corpus', manifest, '--json');
    expect(one.code, one.err).toBe(shards.code);
    expect(shards.err).toBe(one.err);
    return { one: one.json(), shards: shards.json() };
  };

  it('report: the same JSON as the one index, window for window', () => {
    const { one, shards } = same('report', queries);
    expect(one.queries.flatMap((q: { windows: unknown[] }) => q.windows).length).toBeGreaterThan(10);
    expect(shards).toEqual(one);
  });

  it('report within a tolerance: the same', () => {
    const { one, shards } = same('report', queries, '--tolerance', '0.1');
    expect(shards).toEqual(one);
  });

  it('baseline: each sampled piece left out across shards, the same', () => {
    const { one, shards } = same('baseline', '--samples', '12');
    expect(shards).toEqual(one);
  });

  it('check: the same verdict', () => {
    const { one, shards } = same('check', queries, '--min-originality', '0.5');
    expect(shards).toEqual(one);
  });

  it('refuses a shard file rebuilt since the manifest was written', () => {
    const copy = join(dir, 'changed.json');
    const m = JSON.parse(readFileSync(manifest, 'utf8'));
    m.shards[1].crc = '00000000';
    m.shards = m.shards.map((s: { path: string }) => ({ ...s, path: join('corpus', s.path) }));
    writeFileSync(copy, JSON.stringify(m));
    const r = run('report', queries, '--corpus', copy);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/shard-2-of-3 has checksum [0-9a-f]{8}, the manifest expects 00000000 for shard 2/);
  });
});
