/**
 * `earwitness corpus build` over a folder that mixes good MIDI files with
 * damaged ones (test/helpers/damaged-midi.ts: empty, truncated, random
 * bytes, a header announcing 65,535 tracks, chunk lengths of 4 GB, a
 * million note events, a negative length that once looped the parser, a
 * file over the size limit, one that takes minutes to read), run as a user
 * runs it: every good file is indexed, every damaged one is listed with its
 * reason, the build ends within its per-file limit and exits 0.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, truncateSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { MAX_MIDI_BYTES } from '../../../bridge/formats/midi-file.js';
import { CLI, ROOT, tempDir } from '../../helpers/daemon.js';
import { damagedFiles, goodFile, manyNotes } from '../../helpers/damaged-midi.js';

const GOOD = 6;
/** The build's per-file limit here; the slow file needs minutes, every other file milliseconds. */
const FILE_SECONDS = 5;

describe('corpus build over good and damaged files', () => {
  it('indexes every good file, lists every damaged one with its reason, and exits 0', () => {
    const dir = tempDir('bad-files');
    mkdirSync(join(dir, 'sub'));
    for (let k = 0; k < GOOD; k++) writeFileSync(join(dir, k % 2 ? 'sub' : '', `good-${k}.mid`), goodFile(200 + k));
    const damaged = damagedFiles();
    for (const [name, bytes] of Object.entries(damaged)) writeFileSync(join(dir, name), bytes);
    // Over the size limit, without writing 16 MiB: a sparse file.
    writeFileSync(join(dir, 'oversized.mid'), goodFile(1));
    truncateSync(join(dir, 'oversized.mid'), MAX_MIDI_BYTES + 1);
    // Ten tracks of 50,000 notes whose offs never match their ons: the parser underneath searches every off for each on, minutes of work.
    writeFileSync(join(dir, 'slow.mid'), manyNotes(50_000, 10, 127));

    const t0 = Date.now();
    const r = spawnSync(process.execPath, [CLI, 'corpus', 'build', dir, '--json', '--file-seconds', String(FILE_SECONDS)], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
    const seconds = (Date.now() - t0) / 1000;
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
    const s = JSON.parse(r.stdout) as { pieces: number; notes: number; skipped: { file: string; error: string }[]; out: string };
    console.log(`corpus build: ${GOOD + Object.keys(damaged).length + 2} files, ${s.pieces} indexed, ${s.skipped.length} skipped, ${seconds.toFixed(1)} s wall`);
    expect(s.pieces).toBe(GOOD);
    expect(existsSync(s.out)).toBe(true);
    const reasons = Object.fromEntries(s.skipped.map((k) => [k.file, k.error]));
    expect(Object.keys(reasons).sort()).toEqual([...Object.keys(damaged), 'oversized.mid', 'slow.mid'].sort());
    expect(reasons).toEqual({
      'empty.mid': 'the file is empty',
      'truncated.mid': expect.stringMatching(/^damaged MIDI data \(track 1 of 1 is cut short: it declares \d+ bytes, \d+ follow\)$/),
      'random-bytes.mid': 'not a Standard MIDI File (it does not start with an MThd header)',
      'sixty-five-thousand-tracks.mid': 'damaged MIDI data (the header announces 65535 tracks, the file ends after 1)',
      'four-gigabyte-chunk.mid': expect.stringMatching(/^damaged MIDI data \(track 1 of 1 is cut short: it declares 4294967295 bytes, \d+ follow\)$/),
      'four-gigabyte-header.mid': 'damaged MIDI data (the MThd header declares 4294967295 bytes; SMF 1.0 gives it at least 6, and 6 follow)',
      'million-events.mid': 'track 1 of 1 holds more than 100,000 note events (Note On and Note Off), the most a track may hold; split it into several tracks',
      'endless-loop.mid': 'damaged MIDI data (track 1 of 1: the variable-length number at byte 24 runs past the 4 bytes SMF 1.0 allows)',
      'no-notes.mid': 'holds no notes',
      'oversized.mid': `is ${MAX_MIDI_BYTES + 1} bytes, over the limit of ${MAX_MIDI_BYTES} bytes`,
      'slow.mid': `took longer than ${FILE_SECONDS} s to read, so it was stopped`,
    });
    // The slow file is stopped at its limit; nothing else holds the build up.
    expect(seconds).toBeLessThan(FILE_SECONDS + 40);
  });

  it('exits non-zero, listing each file, when nothing could be indexed', () => {
    const dir = tempDir('all-bad');
    writeFileSync(join(dir, 'empty.mid'), new Uint8Array(0));
    writeFileSync(join(dir, 'loop.mid'), damagedFiles()['endless-loop.mid']);
    const r = spawnSync(process.execPath, [CLI, 'corpus', 'build', dir, '--json'], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });
    expect(r.status).not.toBe(0);
    expect(r.stderr).toContain('skipped empty.mid: the file is empty');
    expect(r.stderr).toContain('skipped loop.mid: damaged MIDI data');
    expect(r.stderr).toMatch(/no readable score file \(MIDI, MusicXML or ABC\) with notes under it \(2 skipped\)/);
  });
});
