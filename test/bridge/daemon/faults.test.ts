/**
 * Faults, as they happen on stage, against `node dist/bridge/cli.js listen`
 * on (a copy of) the demo corpus, presets/demo/corpus:
 *
 * - SIGKILL mid-session, a warning standing and notes held: the log passes
 *   SQLite's integrity check, holds every whole note sent, and
 *   `earwitness review latest --json` reviews the session;
 * - SIGINT the moment the daemon says it is listening: the session is
 *   still closed properly (its signal handlers are in place first);
 * - the corpus index deleted, then rebuilt, then overwritten with rubbish
 *   while the daemon runs: it says so on stderr, one line a change, /health
 *   says what is on disk, and it keeps scoring with the copy it loaded.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { setTimeout as sleep } from 'node:timers/promises';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { loadCorpusFolder } from '../../../bridge/corpus/corpus-files.js';
import { INDEX_NAME } from '../../../bridge/formats/index-file.js';
import { CLI, ROOT, type SpawnedDaemon, eventually, health, listen, spawnDaemon, tempDir } from '../../helpers/daemon.js';
import type { ScoreEvent } from '../../../contract/events.js';
import osc from 'osc';
import { noteBytes, oscSender } from '../../helpers/proc.js';

const DEMO = join(ROOT, 'presets', 'demo', 'corpus');
const tunes = loadCorpusFolder(DEMO).corpus.pieces;

/** The first `beats` beats of a demo tune, played from `at`, as /ew/note with beats, a note every 10 ms (so there are evaluations to warn on). */
async function quote(d: SpawnedDaemon, tune: number, at: number, beats = 16): Promise<number> {
  const sender = oscSender(d.osc);
  const notes = tunes[tune].notes.filter((n) => n.onset < beats);
  for (const n of notes) {
    await sender.send(noteBytes(n.pitch, n.duration, at + n.onset));
    await sleep(10);
  }
  sender.close();
  return notes.length;
}

const cli = (...args: string[]) => spawnSync(process.execPath, [CLI, ...args], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });

describe('SIGKILL mid-session', () => {
  it('leaves a consistent log that review reads', async () => {
    const d = await spawnDaemon(['--corpus', DEMO, '--preset', 'jam', '--input', 'osc']);
    const page = await listen(d.http);
    let whole = 0;
    for (let k = 0; k < 3; k++) whole += await quote(d, 0, k * 16);
    await page.next((e) => e.type === 'warning', 20_000);
    // Two notes held (note-on, no note-off yet): the documented loss of a kill.
    const sender = oscSender(d.osc);
    for (const pitch of [40, 43]) await sender.send(osc.writePacket({ address: '/ew/on', args: [{ type: 'i', value: pitch }, { type: 'i', value: 90 }] }, { metadata: true }));
    sender.close();
    await eventually(() => health(d.http), (h) => h.notes === whole + 2 && h.held === 2);
    page.close();
    const killed = await d.stop('SIGKILL');
    expect(killed.signal).toBe('SIGKILL');

    const db = new Database(d.log, { readonly: true });
    expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
    db.close();
    const r = cli('review', 'latest', '--log', d.log, '--json');
    expect(r.status, r.stderr).toBe(0);
    const review = JSON.parse(r.stdout) as { end: string | null; notes: number; warnings: { piece: string; clearedAt: number | null }[]; windows: unknown[]; caution: string };
    console.log(`faults: SIGKILL with ${whole} whole notes and 2 held; review read ${review.notes} notes, ${review.warnings.length} warning(s), ${review.windows.length} windows`);
    expect(review.end).toBeNull(); // no handler ran
    expect(review.notes).toBe(whole);
    expect(review.warnings.length).toBeGreaterThan(0);
    expect(review.warnings[0].piece).toBe(tunes[0].path);
    expect(review.windows.length).toBeGreaterThan(0);
    expect(review.caution).toMatch(/not a legal finding/);
    // The next daemon opens the same log and starts the next session.
    const next = await spawnDaemon(['--corpus', DEMO, '--input', 'osc'], { log: d.log });
    await next.stop();
    expect(next.stdout()).toMatch(/\(session 2\)/);
  });
});

describe('SIGINT at once', () => {
  it('closes the session even when it comes the instant the daemon says it is listening', async () => {
    const d = await spawnDaemon(['--corpus', DEMO, '--input', 'osc']);
    const stopped = await d.stop('SIGINT');
    expect(stopped).toMatchObject({ code: 0, signal: null });
    const r = cli('sessions', '--log', d.log, '--json');
    expect((JSON.parse(r.stdout) as { end: string | null }[])[0].end).not.toBeNull();
  });
});

describe('the corpus index changed under a running daemon', () => {
  it('is read a piece at a time, every piece ahead of need while the daemon waits, as /health says', async () => {
    const dir = tempDir('read-ahead');
    cpSync(DEMO, dir, { recursive: true });
    expect(cli('corpus', 'build', dir, '--json').status).toBe(0);
    const d = await spawnDaemon(['--corpus', dir, '--preset', 'jam', '--input', 'osc']);
    try {
      const h = await eventually(() => health(d.http), (x) => x.readAhead !== null);
      expect(h.readAhead).toEqual({ pieces: 12, ms: expect.any(Number) as number });
    } finally {
      await d.stop();
    }
  });

  it('is reported, one line a change, and scoring carries on with the loaded copy', async () => {
    const dir = tempDir('index-watch');
    cpSync(DEMO, dir, { recursive: true });
    expect(cli('corpus', 'build', dir, '--json').status).toBe(0);
    const index = join(dir, INDEX_NAME);
    const d = await spawnDaemon(['--corpus', dir, '--preset', 'jam', '--input', 'osc']);
    try {
      expect(d.stdout()).toContain(`corpus: ${index} (12 pieces`);
      const page = await listen(d.http);
      const lines = (): string[] => d.stderr().split('\n').filter((l) => l.includes('the corpus index'));
      /** Plays a quote of tune 3 and waits for the verdict on its last note: the loaded corpus still answers. */
      let at = 0;
      let total = 0;
      const stillScoring = async (): Promise<ScoreEvent> => {
        total += await quote(d, 3, at);
        at += 32;
        await eventually(() => health(d.http), (h) => h.notes === total);
        const s = await page.next<ScoreEvent>((e) => e.type === 'score' && e.seq === total, 20_000);
        expect(s.piece).toBe(tunes[3].path);
        expect(s.score).toBeGreaterThan(0.5);
        return s;
      };
      expect((await health(d.http)).corpusIndex).toEqual({ file: index, onDisk: 'as loaded' });

      // Deleted before anything was scored: the worker must not need the file for any note it shows.
      rmSync(index);
      await eventually(async () => lines(), (l) => l.length === 1);
      expect(lines()).toEqual([`earwitness: the corpus index ${index} was deleted while listening; still scoring with the copy loaded at start (12 pieces, 733 notes); restart earwitness listen to load a rebuilt one`]);
      expect((await health(d.http)).corpusIndex).toEqual({ file: index, onDisk: 'deleted' });
      await stillScoring();

      expect(cli('corpus', 'build', dir, '--json').status).toBe(0);
      await eventually(async () => lines(), (l) => l.length === 2);
      expect(lines()[1]).toMatch(/the corpus index .* was replaced while listening; still scoring with the copy loaded at start \(12 pieces, 733 notes\); restart earwitness listen to load the new one$/);
      expect((await health(d.http)).corpusIndex.onDisk).toBe('replaced');

      writeFileSync(index, 'not an index at all');
      await eventually(async () => lines(), (l) => l.length === 3);
      await stillScoring();
      const h = await health(d.http);
      expect(h.ok).toBe(true);
      expect(h.corpus).toMatchObject({ pieces: 12, notes: 733 });
      page.close();
    } finally {
      await d.stop();
    }
  });
});
