/**
 * The session log's checkpoints run on a thread of their own
 * (bridge/daemon/log-checkpoints.ts), never on the connection that writes
 * notes: SQLite's WAL mode (sqlite.org/wal.html, "Checkpointing") copies
 * the write-ahead file back into the database at a checkpoint, so the
 * database file grows only when one runs.
 */
import { existsSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { SessionLog } from '../../../bridge/formats/session-log.js';
import { startCheckpoints } from '../../../bridge/daemon/log-checkpoints.js';
import { ROOT, tempDir } from '../../helpers/daemon.js';
import { pathToFileURL } from 'node:url';

const THREAD = pathToFileURL(join(ROOT, 'dist', 'bridge', 'daemon', 'checkpoint-thread.js'));
const NOTES = 1500;

function write(log: SessionLog): number {
  const session = log.startSession({ corpus: 'c', preset: 'jam', settings: {} });
  for (let i = 0; i < NOTES; i++) {
    log.addNote(session, { seq: i + 1, onset: i / 2, duration: 0.5, pitch: 60 + (i % 12), velocity: 90, channel: 1, receivedAt: i });
    log.addScore(session, { seq: i + 1, time: i, score: 0.5, windowStart: 0, windowNotes: 20, piece: 'a.mid', transposition: 0, pieceStart: 0, matched: 10 });
  }
  return session;
}

describe('session log checkpoints', () => {
  it('a log opened with checkpointsElsewhere never checkpoints on its own: 3,000 commits stay in the write-ahead file', () => {
    const file = join(tempDir('ckpt'), 'sessions.db');
    const log = SessionLog.open(file, { checkpointsElsewhere: true });
    const before = statSync(file).size;
    write(log);
    expect(statSync(file).size).toBe(before);
    expect(statSync(`${file}-wal`).size).toBeGreaterThan(1000 * 4096);
    log.close();
    // Left to itself (the default), SQLite checkpoints once the write-ahead file passes 1,000 pages.
    const plain = join(tempDir('ckpt'), 'sessions.db');
    const other = SessionLog.open(plain);
    const start = statSync(plain).size;
    write(other);
    expect(statSync(plain).size).toBeGreaterThan(start);
    other.close();
  });

  it('the thread copies the notes into the database while the writer goes on, and leaves every one readable after close', async () => {
    const file = join(tempDir('ckpt'), 'sessions.db');
    const log = SessionLog.open(file, { checkpointsElsewhere: true });
    const before = statSync(file).size;
    const failures: string[] = [];
    const checkpoints = startCheckpoints(file, { everyMs: 50, threadUrl: THREAD, onFailure: (m) => failures.push(m) });
    const session = write(log);
    const until = Date.now() + 10_000;
    while (statSync(file).size === before && Date.now() < until) await new Promise((resolve) => setTimeout(resolve, 20));
    expect(statSync(file).size).toBeGreaterThan(before);
    await checkpoints.close();
    log.close();
    expect(failures).toEqual([]);
    expect(existsSync(`${file}-wal`)).toBe(false);
    const read = SessionLog.open(file, { readonly: true });
    const got = read.session(session)!;
    expect(got.notes).toHaveLength(NOTES);
    expect(got.scores).toHaveLength(NOTES);
    read.close();
  });

  it('a log the thread cannot open is told through onFailure, once', async () => {
    const failures: string[] = [];
    const checkpoints = startCheckpoints(join(tempDir('ckpt'), 'missing', 'sessions.db'), { everyMs: 20, threadUrl: THREAD, onFailure: (m) => failures.push(m) });
    await checkpoints.close();
    expect(failures).toHaveLength(1);
    expect(failures[0]).toMatch(/unable to open|directory does not exist|no such/i);
  });
});
