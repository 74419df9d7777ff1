/**
 * A corpus folder of symbolic links: links to MIDI files and to folders are
 * followed (a folder of links picks a subset of a large collection), a link
 * back to a folder it sits in is a loop, reported and not followed, and a
 * link to nothing is reported. In process (walkCorpus, loadCorpusFolder)
 * and as a user runs `corpus build` and `report`.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadCorpusFolder, walkCorpus } from '../../../bridge/corpus/corpus-files.js';
import { CLI, ROOT, tempDir } from '../../helpers/daemon.js';
import { goodFile } from '../../helpers/damaged-midi.js';

/** A collection of four tunes, and a pick of it made of links: two files, one folder, a loop and a dangling link. */
function picked(): { pick: string } {
  const dir = tempDir('links');
  const all = join(dir, 'collection');
  mkdirSync(join(all, 'jigs'), { recursive: true });
  writeFileSync(join(all, 'reel-a.mid'), goodFile(301));
  writeFileSync(join(all, 'reel-b.mid'), goodFile(302));
  writeFileSync(join(all, 'jigs', 'jig-c.mid'), goodFile(303));
  writeFileSync(join(all, 'jigs', 'jig-d.mid'), goodFile(304));
  const pick = join(dir, 'pick');
  mkdirSync(pick);
  symlinkSync(join(all, 'reel-a.mid'), join(pick, 'reel-a.mid'));
  symlinkSync(join(all, 'jigs'), join(pick, 'jigs'));
  symlinkSync(pick, join(pick, 'again'));
  symlinkSync(join(all, 'gone.mid'), join(pick, 'gone.mid'));
  return { pick };
}

describe('symbolic links in a corpus', () => {
  it('follows links to files and folders, reports a loop and a link to nothing', () => {
    const { pick } = picked();
    const w = walkCorpus(pick);
    expect(w.files.map((f) => f.slice(pick.length + 1)).sort()).toEqual(['jigs/jig-c.mid', 'jigs/jig-d.mid', 'reel-a.mid']);
    expect(w.skipped.map((s) => s.file).sort()).toEqual(['again', 'gone.mid']);
    expect(w.skipped.find((s) => s.file === 'again')!.error).toMatch(/a loop, not followed/);
    const loaded = loadCorpusFolder(pick);
    expect(loaded.corpus.pieces.map((p) => p.path).sort()).toEqual(['jigs/jig-c.mid', 'jigs/jig-d.mid', 'reel-a.mid']);
  });

  it('corpus build indexes the linked files and lists the loop as skipped, exit 0', () => {
    const { pick } = picked();
    const r = spawnSync(process.execPath, [CLI, 'corpus', 'build', pick, '--json'], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });
    expect(r.status, r.stderr).toBe(0);
    const s = JSON.parse(r.stdout) as { pieces: number; skipped: { file: string; error: string }[] };
    expect(s.pieces).toBe(3);
    expect(s.skipped.map((x) => x.file).sort()).toEqual(['again', 'gone.mid']);
  });
});
