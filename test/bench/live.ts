/**
 * Benchmark (not a test): note-in → score-out latency of `earwitness
 * listen`, over loopback OSC in and the /events WebSocket out, against a
 * synthetic corpus (test/bench/synthetic.ts) of a given size written as
 * MIDI files and indexed with `corpus build`. Notes go one at a time, each after the previous one's score,
 * so no evaluation is coalesced and every sample is one note's full trip.
 * The targets are p99 ≤ 3 ms at 1M corpus notes and ≤ 5 ms at 10M, with
 * the presets' recent-stretch matching on (`liveTarget`); the bench also
 * says whether p99 is under 10 ms, the usual ceiling for responsive musical
 * control (Wessel & Wright 2002, ../shared/reference/check-values.md).
 *
 *   node dist/test/bench/live.js [--notes 1000000] [--samples 100] [--window 16] [--untimed 20] [-- LISTEN FLAGS…]
 *
 * The first `--untimed` notes are played but not timed: they fill the
 * window. The engine goes on compiling the daemon's code for thousands of
 * notes more, so a larger `--untimed` times a daemon that has been played
 * for a while rather than one just started. The passage loops when it is
 * shorter than the notes asked for.
 *
 * Flags after `--` go to `earwitness listen` as they are (`-- --tolerance 0`
 * measures the exact matcher alone). It also times this machine's floors,
 * the same trip with no scoring, straight and through a worker thread and
 * back as the daemon's notes go, and that worker busy for the median
 * scoring time (test/bench/echo-floor.ts), and adds its figures to
 * test/bench/RESULTS.md.
 *
 * @example
 *   node dist/test/bench/live.js --notes 10000
 *   // corpus 10,000 notes (10 pieces) … p50 3.1 ms, p99 5.2 ms …
 */
import { spawnSync } from 'node:child_process';
import { createSocket } from 'node:dgram';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import osc from 'osc';
import { GRAINS_PER_BEAT } from '../../core/note.js';
import { percentile } from '../../core/stats.js';
import { midiBytes } from '../../bridge/formats/midi-write.js';
import type { ScoreEvent } from '../../contract/events.js';
import { synthCorpus } from './synthetic.js';
import { idleCollector } from '../../bridge/daemon/idle-collect.js';
import { echoFloor } from './echo-floor.js';
import { recordResults } from './results.js';
import { CLI, health, listen, spawnDaemon, warmedUp } from '../helpers/daemon.js';
import { tempRoot } from '../helpers/temp-root.js';

/** Trips each floor is timed over, at least. */
const FLOOR_TRIPS = 2000;

/** The trip's p99 targets by corpus size, smallest first: a corpus up to `notes` notes is held to `p99Ms`. */
const TARGETS = [
  { notes: 1_000_000, p99Ms: 3 },
  { notes: 10_000_000, p99Ms: 5 },
];
const CEILING_MS = 10;

/**
 * The p99 target, ms, for a corpus of the notes asked for; null above the largest size a target is set for.
 *
 * @example
 *   liveTarget(10_000)       // → 3
 *   liveTarget(10_000_000)   // → 5
 */
function liveTarget(notes: number): number | null {
  return TARGETS.find((t) => notes <= t.notes)?.p99Ms ?? null;
}

/** The benchmark's own flags: those before a `--`. */
const own = process.argv.includes('--') ? process.argv.slice(0, process.argv.indexOf('--')) : process.argv;

function flag(name: string, fallback: number, options: { orZero?: boolean } = {}): number {
  const i = own.indexOf(`--${name}`);
  const v = i < 0 ? fallback : Number(own[i + 1]);
  if (!(Number.isFinite(v) && (v > 0 || (options.orZero && v === 0)))) throw new Error(`--${name} must be a positive number${options.orZero ? ' or 0' : ''}, got ${own[i + 1]}`);
  return v;
}

/** The corpus, the session log and the daemon's own temporary files go in a folder of their own, removed when the run ends, however it ends: a large corpus fills a disk in a few runs. */
async function main(): Promise<void> {
  const temp = tempRoot('bench-live');
  try {
    await run(temp.root);
  } finally {
    temp.remove();
  }
}

async function run(root: string): Promise<void> {
  const notes = flag('notes', 1_000_000);
  const samples = flag('samples', 100);
  const untimed = flag('untimed', 20, { orZero: true });
  const window = flag('window', 16);
  const t0 = performance.now();
  let pieces = synthCorpus({ notes, seed: 1 });
  const dir = join(root, 'corpus');
  mkdirSync(dir);
  pieces.forEach((points, i) => {
    const track = points.map((p) => ({ onset: p.at / GRAINS_PER_BEAT, duration: 0.5, pitch: p.pitch, velocity: 80 }));
    writeFileSync(join(dir, `piece-${String(i).padStart(5, '0')}.mid`), midiBytes([{ name: 'voices', channel: 1, notes: track }], { title: `piece ${i}` }));
  });
  const total = pieces.reduce((s, p) => s + p.length, 0);
  process.stdout.write(`corpus ${total.toLocaleString('en')} notes (${pieces.length} pieces), written in ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);

  // As a user with a large corpus would: index it once, then listen (the folder's current index is used).
  const tb = performance.now();
  const built = spawnSync(process.execPath, [CLI, 'corpus', 'build', dir], { encoding: 'utf8' });
  if (built.status !== 0) throw new Error(`corpus build failed: ${built.stderr}`);
  process.stdout.write(`corpus build ${((performance.now() - tb) / 1000).toFixed(1)} s\n`);
  const t1 = performance.now();
  const extra = process.argv.includes('--') ? process.argv.slice(process.argv.indexOf('--') + 1) : [];
  const d = await spawnDaemon(['--corpus', dir, '--preset', 'jam', '--input', 'osc', '--window', String(window), ...extra], { startMs: 30 * 60_000, log: join(root, 'sessions.db') });
  process.stdout.write(`daemon up in ${((performance.now() - t1) / 1000).toFixed(1)} s (the index loaded in the worker)\n`);
  // As a performer would find it a few seconds later: the worker has warmed up while nothing was played.
  const warm = await warmedUp(d.http);
  process.stdout.write(`worker warmed up in ${(warm.ms / 1000).toFixed(1)} s (${warm.notes} notes)\n`);
  const events = await listen(d.http);
  const socket = createSocket('udp4');
  // The first piece, played back (again from its start, 4 beats after its last note, if it is too short): windows that match, as a quoting performer's would.
  const passage = pieces[0];
  const span = passage[passage.length - 1].at + 4 * GRAINS_PER_BEAT;
  const played = Array.from({ length: untimed + samples }, (_, k) => {
    const p = passage[k % passage.length];
    return { pitch: p.pitch, at: p.at + Math.floor(k / passage.length) * span };
  });
  // This process's own collections must not count as the daemon's latency: the corpus goes now, and garbage between notes, untimed.
  pieces = [];
  const collect = idleCollector();
  collect({ full: true });
  const latencies: number[] = [];
  const workerMs: number[] = [];
  const frameBytes: number[] = [];
  for (const [k, p] of played.entries()) {
    const seq = k + 1;
    const bytes = osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: p.pitch }, { type: 'i', value: 90 }, { type: 'f', value: 0.5 }, { type: 'f', value: p.at / GRAINS_PER_BEAT }] }, { metadata: true });
    const sent = performance.now();
    socket.send(bytes, d.osc, '127.0.0.1');
    const score = await events.next<ScoreEvent>((e) => e.type === 'score' && e.seq === seq, 10 * 60_000);
    if (k >= untimed) {
      latencies.push(performance.now() - sent);
      frameBytes.push(Buffer.byteLength(JSON.stringify(score)));
      workerMs.push(score.scoringMs as number);
    }
    collect();
  }
  socket.close();
  events.close();
  const h = await health(d.http);
  await d.stop();
  latencies.sort((a, b) => a - b);
  workerMs.sort((a, b) => a - b);
  frameBytes.sort((a, b) => a - b);
  // The same trip with nothing in it: UDP in, a frame of the median score event's size out; then with the hops to a worker thread and back as well. Over at least 2,000 trips each: they are quick, and a p99 of a few hundred swings.
  const floorSetup = { samples: Math.max(samples, FLOOR_TRIPS), frameBytes: percentile(frameBytes, 50) };
  const floor = await echoFloor(floorSetup);
  const workerFloor = await echoFloor({ ...floorSetup, through: 'worker' });
  // And with the worker busy for the daemon's median scoring time: what a daemon doing nothing but scoring would take here.
  const busyFloor = await echoFloor({ ...floorSetup, through: 'worker', busyMs: percentile(workerMs, 50) });
  const ms = (x: number) => `${x.toFixed(2)} ms`;
  const target = liveTarget(notes);
  const met = (limit: number): string => (percentile(latencies, 99) <= limit ? 'met' : 'not met');
  process.stdout.write(
    [
      `window ${window} beats${extra.length ? `, listen ${extra.join(' ')}` : ''}, ${latencies.length} notes timed after ${untimed} untimed, ${h.coalesced} coalesced`,
      `note-in → score-out: p50 ${ms(percentile(latencies, 50))}, p99 ${ms(percentile(latencies, 99))}, max ${ms(latencies[latencies.length - 1])}`,
      `of which scoring in the worker: p50 ${ms(percentile(workerMs, 50))}, p99 ${ms(percentile(workerMs, 99))}`,
      `floor on this machine (loopback UDP → WebSocket echo, no scoring, ${Math.round(percentile(frameBytes, 50))}-byte frames): p50 ${ms(floor.p50Ms)}, p99 ${ms(floor.p99Ms)}, max ${ms(floor.maxMs)}`,
      `the same through a worker thread and back, as the daemon's notes go (no scoring): p50 ${ms(workerFloor.p50Ms)}, p99 ${ms(workerFloor.p99Ms)}, max ${ms(workerFloor.maxMs)}`,
      `the same with the worker busy ${ms(percentile(workerMs, 50))} a note, the median scoring time: p50 ${ms(busyFloor.p50Ms)}, p99 ${ms(busyFloor.p99Ms)}, max ${ms(busyFloor.maxMs)}`,
      target === null ? `no p99 target set for a corpus over ${TARGETS[TARGETS.length - 1].notes.toLocaleString('en')} notes` : `target p99 ≤ ${target} ms at this corpus size: ${met(target)}`,
      `the usual ceiling for responsive musical control, p99 ≤ ${CEILING_MS} ms (Wessel & Wright 2002): ${met(CEILING_MS)}`,
    ].join('\n') + '\n',
  );
  const r = (x: number): number => Math.round(x * 100) / 100;
  const summary = {
    bench: 'live',
    window,
    untimed,
    listen: extra.join(' ') || 'preset jam',
    rows: [
      {
        corpus: `synthetic ${total.toLocaleString('en')}`,
        notes: latencies.length,
        coalesced: h.coalesced,
        targetP99Ms: target,
        noteInScoreOut: { p50Ms: r(percentile(latencies, 50)), p99Ms: r(percentile(latencies, 99)), maxMs: r(latencies[latencies.length - 1]) },
        worker: { p50Ms: r(percentile(workerMs, 50)), p99Ms: r(percentile(workerMs, 99)) },
        floor: { frameBytes: Math.round(percentile(frameBytes, 50)), trips: floorSetup.samples, p50Ms: r(floor.p50Ms), p99Ms: r(floor.p99Ms), maxMs: r(floor.maxMs) },
        floorThroughWorker: { p50Ms: r(workerFloor.p50Ms), p99Ms: r(workerFloor.p99Ms), maxMs: r(workerFloor.maxMs) },
        floorWorkerBusy: { busyMs: r(percentile(workerMs, 50)), p50Ms: r(busyFloor.p50Ms), p99Ms: r(busyFloor.p99Ms), maxMs: r(busyFloor.maxMs) },
      },
    ],
  };
  process.stdout.write(JSON.stringify(summary) + '\n');
  process.stderr.write(`results added to ${recordResults(summary)}\n`);
}

// This client collects its own garbage between notes, untimed, so it needs the engine's collector: run again with it.
if (typeof (globalThis as { gc?: unknown }).gc !== 'function') process.exit(spawnSync(process.execPath, [...process.execArgv, '--expose-gc', ...process.argv.slice(1)], { stdio: 'inherit' }).status ?? 1);

main().catch((e: Error) => {
  process.stderr.write(`live benchmark: ${e.message}\n`);
  process.exitCode = 1;
});
