/**
 * Stopping. SIGINT and SIGTERM: the log is flushed (the session has its
 * end time and every note), ports close, the process exits 0 within 2 s.
 * SIGKILL (issue 6, durability): no handler runs, yet the log opens
 * cleanly afterwards and holds every note sent more than a second before
 * the kill — notes are written as they come, each in its own transaction
 * (SQLite in WAL mode).
 */
import { createSocket } from 'node:dgram';
import osc from 'osc';
import { afterAll, describe, expect, it } from 'vitest';
import { SessionLog } from '../../../bridge/formats/session-log.js';
import { type SpawnedDaemon, eventually, health, spawnDaemon, writeCorpus } from '../../helpers/daemon.js';

const socket = createSocket('udp4');
afterAll(() => socket.close());
const corpus = writeCorpus();

/** `n` whole notes with explicit beats, from `seq0` on, so each is recognisable in the log. */
async function play(d: SpawnedDaemon, n: number, first: number): Promise<void> {
  for (let k = 0; k < n; k++) {
    const beat = (first + k) / 2;
    const bytes = osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: 60 + ((first + k) % 12) }, { type: 'i', value: 90 }, { type: 'f', value: 0.5 }, { type: 'f', value: beat }] }, { metadata: true });
    await new Promise<void>((resolve) => socket.send(bytes, d.osc, '127.0.0.1', () => resolve()));
  }
}

const latest = (file: string) => {
  const log = SessionLog.open(file, { readonly: true });
  try {
    return log.session('latest')!;
  } finally {
    log.close();
  }
};

describe.each(['SIGINT', 'SIGTERM'] as const)('%s', (signal) => {
  it('flushes the log, closes the ports and exits 0 within 2 s', async () => {
    const d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode']);
    await play(d, 40, 0);
    await eventually(() => health(d.http), (h) => h.notes === 40);
    const stopped = await d.stop(signal);
    expect(stopped.code).toBe(0);
    expect(stopped.ms).toBeLessThan(2000);
    const s = latest(d.log);
    expect(s.summary.end).not.toBeNull();
    expect(s.notes.length).toBe(40);
    expect(s.notes.map((n) => n.onset)).toEqual(Array.from({ length: 40 }, (_, k) => k / 2));
    // The ports are free again: a new daemon can take the same ones.
    const again = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode', '--osc-port', String(d.osc), '--http-port', String(d.http)]);
    await again.stop();
    expect([again.osc, again.http]).toEqual([d.osc, d.http]);
  });
});

describe('SIGKILL (durability)', () => {
  it('loses at most the last second of notes, and the log opens cleanly next time', async () => {
    const d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode']);
    await play(d, 50, 0);
    await eventually(() => health(d.http), (h) => h.notes === 50);
    await new Promise((r) => setTimeout(r, 1100));
    await play(d, 10, 50); // within the last second: these may be lost
    const killed = await d.stop('SIGKILL');
    expect(killed.signal).toBe('SIGKILL');

    const log = SessionLog.open(d.log); // as the next daemon opens it: read-write, recovering the WAL
    const s = log.session('latest')!;
    log.close();
    expect(s.summary.end).toBeNull(); // no handler ran
    const onsets = new Set(s.notes.map((n) => n.onset));
    for (let k = 0; k < 50; k++) expect(onsets.has(k / 2), `note ${k + 1}`).toBe(true);

    const next = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode'], { log: d.log });
    await next.stop();
    expect(next.stdout()).toMatch(new RegExp(`session ${s.summary.id + 1}\\)`));
  });
});
