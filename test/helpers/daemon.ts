/**
 * For the daemon's tests: a small corpus of invented melodies written as
 * MIDI files to a temp folder, the daemon started as a user starts it
 * (`node dist/bridge/cli.js listen …` on free ports), a WebSocket client
 * that collects events, and /health.
 *
 * @example
 *   const corpus = writeCorpus();
 *   const d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode']);
 *   const events = await listen(d.http);
 *   // … send notes to d.osc …
 *   await events.next((e) => e.type === 'warning');
 *   await d.stop('SIGINT');
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { WebSocket } from 'ws';
import type { Note } from '../../core/note.js';
import { seededRandom } from '../../core/stats.js';
import { midiBytes } from '../../bridge/formats/midi-write.js';
import type { DaemonEvent } from '../../contract/events.js';
import { packageRoot } from '../../bridge/formats/package-root.js';
import { tempDir } from './temp-root.js';

/** The repository, found the same way from the sources (vitest) and from dist/ (the benchmark). */
export const ROOT = packageRoot();
export const CLI = join(ROOT, 'dist', 'bridge', 'cli.js');
export const WORKER_URL = pathToFileURL(join(ROOT, 'dist', 'bridge', 'daemon', 'scoring-worker.js'));

export { tempDir };

/** A melody of `beats` beats on an eighth-note grid, one note at a time, from a seed: no two seeds alike. */
export function melody(seed: number, beats = 32): Note[] {
  const rand = seededRandom(seed);
  const notes: Note[] = [];
  for (let at = 0; at < beats; ) {
    const duration = rand() < 0.7 ? 0.5 : 1;
    const pitch = 60 + Math.floor(rand() * 20);
    notes.push({ onset: at, duration, pitch, morph: pitch, velocity: 90, channel: 1 });
    at += duration;
  }
  return notes;
}

export interface TestCorpus {
  dir: string;
  /** Notes of each piece, by file name. */
  pieces: Record<string, Note[]>;
}

/** Three invented 32-beat melodies as SMF files. */
export function writeCorpus(): TestCorpus {
  const dir = tempDir('corpus');
  const pieces: Record<string, Note[]> = { 'ashfall.mid': melody(11), 'brinewater.mid': melody(23), 'cinderpath.mid': melody(37) };
  for (const [file, notes] of Object.entries(pieces)) {
    writeFileSync(join(dir, file), midiBytes([{ name: 'melody', channel: 1, notes }], { title: file.replace('.mid', ''), bpm: 120 }));
  }
  return { dir, pieces };
}

/** The notes of a piece with onsets in [from, to), moved to start at `at` and transposed by `up`. */
export const passage = (notes: readonly Note[], from: number, to: number, at: number, up: number): Note[] =>
  notes.filter((n) => n.onset >= from && n.onset < to).map((n) => ({ ...n, onset: n.onset - from + at, pitch: n.pitch + up, morph: n.pitch + up }));

export interface SpawnedDaemon {
  child: ChildProcess;
  osc: number;
  http: number;
  log: string;
  stdout: () => string;
  stderr: () => string;
  /** Resolves with the exit code (or signal) once the process has ended. */
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  stop(signal?: NodeJS.Signals): Promise<{ code: number | null; signal: NodeJS.Signals | null; ms: number }>;
}

/** Starts `earwitness listen` on free ports with a temp log; resolves once it prints its listening line. */
export function spawnDaemon(args: string[], options: { log?: string; startMs?: number } = {}): Promise<SpawnedDaemon> {
  const startMs = options.startMs ?? 20_000;
  const log = options.log ?? join(tempDir('log'), 'sessions.db');
  const child = spawn('node', [CLI, 'listen', '--osc-port', '0', '--http-port', '0', '--log', log, ...args], {
    cwd: ROOT,
    env: { ...process.env, XDG_DATA_HOME: tempDir('xdg') },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  let err = '';
  child.stdout!.on('data', (d: Buffer) => (out += d.toString()));
  child.stderr!.on('data', (d: Buffer) => (err += d.toString()));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.on('exit', (code, signal) => resolve({ code, signal })));
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`the daemon did not start within ${startMs / 1000} s; stdout: ${out}; stderr: ${err}`)), startMs);
    void exited.then(({ code }) => {
      clearTimeout(timer);
      reject(new Error(`the daemon exited with ${code} before listening; stdout: ${out}; stderr: ${err}`));
    });
    child.stdout!.on('data', () => {
      const m = /listening osc=(\d+) http=(\d+)/.exec(out);
      if (!m) return;
      clearTimeout(timer);
      resolve({
        child,
        osc: Number(m[1]),
        http: Number(m[2]),
        log,
        stdout: () => out,
        stderr: () => err,
        exited,
        async stop(signal = 'SIGINT') {
          const t0 = Date.now();
          if (child.exitCode === null && child.signalCode === null) child.kill(signal);
          const r = await exited;
          return { ...r, ms: Date.now() - t0 };
        },
      });
    });
  });
}

export async function health(http: number): Promise<Record<string, any>> {
  const r = await fetch(`http://127.0.0.1:${http}/health`);
  return (await r.json()) as Record<string, any>;
}

/** Resolves with /health's `warmUp` once the scoring worker's warm-up has ended (bridge/daemon/scoring-worker.ts). */
export async function warmedUp(http: number, timeoutMs = 10 * 60_000): Promise<{ notes: number; ms: number; complete: boolean }> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const { warmUp } = await health(http);
    if (warmUp) return warmUp;
    if (Date.now() > until) throw new Error(`the scoring worker did not finish warming up within ${timeoutMs / 1000} s`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

export interface EventLog {
  events: DaemonEvent[];
  /** The first event (already received or still to come) that passes `test`. */
  next<E extends DaemonEvent = DaemonEvent>(test: (e: DaemonEvent) => boolean, timeoutMs?: number): Promise<E>;
  close(): void;
}

/** Opens /events as a page of the daemon would, collecting every event. */
export function listen(http: number, headers: Record<string, string> = { origin: `http://127.0.0.1:${http}` }): Promise<EventLog> {
  const ws = new WebSocket(`ws://127.0.0.1:${http}/events`, { headers });
  const events: DaemonEvent[] = [];
  const waiters: { test: (e: DaemonEvent) => boolean; resolve: (e: DaemonEvent) => void }[] = [];
  ws.on('message', (data) => {
    const e = JSON.parse(data.toString()) as DaemonEvent;
    events.push(e);
    for (const w of [...waiters]) if (w.test(e)) {
      waiters.splice(waiters.indexOf(w), 1);
      w.resolve(e);
    }
  });
  return new Promise((resolve, reject) => {
    ws.once('error', reject);
    ws.once('open', () =>
      resolve({
        events,
        next: <E extends DaemonEvent>(test: (e: DaemonEvent) => boolean, timeoutMs = 10_000) => {
          const seen = events.find(test);
          if (seen) return Promise.resolve(seen as E);
          return new Promise<E>((ok, fail) => {
            const timer = setTimeout(() => fail(new Error(`no such event within ${timeoutMs} ms; got ${events.map((e) => e.type).join(', ')}`)), timeoutMs);
            waiters.push({ test, resolve: (e) => (clearTimeout(timer), ok(e as E)) });
          });
        },
        close: () => ws.terminate(),
      }),
    );
  });
}

/** Polls until `check` holds, for conditions the daemon reaches on its own time (a UDP packet read, say). */
export async function eventually<T>(get: () => Promise<T>, check: (v: T) => boolean, timeoutMs = 10_000): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await get();
    if (check(v) || Date.now() > until) return v;
    await new Promise((r) => setTimeout(r, 50));
  }
}
