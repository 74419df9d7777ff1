/**
 * The sharded benchmark, run by hand: one synthetic corpus (test/bench/synthetic.ts)
 * written as 1, 2 and 3 shards, each shard served by an `earwitness worker`
 * process through a Redis of its own (Debian's redis-server on a free
 * loopback port), and the same 16-beat windows (hop 8) of queries cut from
 * the corpus and of unrelated material matched over the queue: windows a
 * second, wall clock, with the load average beside them. Also the same
 * windows in this process through the manifest (no queue), and how many
 * sharded answers equal the one index's (through the index each shard reads
 * its own budget of candidates, so some differ: counted above and below). Adds its rows to test/bench/RESULTS.md.
 *
 * @example
 *   npm run build && node dist/test/bench/shards.js --notes 200000
 *   // shards 1: 412 windows in 9.8 s, 42.0 windows/s (load 1.9) …
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { type Note, type Point, toGrains } from '../../core/note.js';
import { flattenNotes } from '../../core/flat-notes.js';
import { estimateKey } from '../../core/spelling.js';
import { windows } from '../../core/windows.js';
import type { MatchWindow } from '../../core/match.js';
import { EXACT_MODE } from '../../core/pipeline.js';
import { writeShards } from '../../bridge/corpus/shard-build.js';
import { openCorpus } from '../../bridge/corpus/open-corpus.js';
import { shardCandidates } from '../../bridge/corpus/sharded-corpus.js';
import { readShardManifest } from '../../bridge/formats/shard-manifest.js';
import { buildIndexFile } from '../../bridge/formats/index-build.js';
import { matchOverQueue } from '../../bridge/queue/queue-matcher.js';
import { startRedis, startWorker } from '../helpers/redis.js';
import { recordResults } from './results.js';
import { synthCorpus, unrelated } from './synthetic.js';

const W = 16;
const HOP = 8;
const arg = (name: string, fallback: number): number => (process.argv.includes(`--${name}`) ? Number(process.argv[process.argv.indexOf(`--${name}`) + 1]) : fallback);

const notesOf = (points: readonly Point[]): Note[] => points.map((p) => ({ onset: p.at / toGrains(1), duration: 0.5, pitch: p.pitch, morph: p.pitch, velocity: 80, channel: 1 }));

/** Windows of queries: passages of corpus pieces moved 3 steps up, and unrelated walks. */
function probes(pieces: readonly Point[][], count: number): MatchWindow[] {
  const out: MatchWindow[] = [];
  for (let q = 0; out.length < count; q++) {
    const source = q % 2 === 0 ? pieces[(q * 7) % pieces.length].filter((p) => p.at < toGrains(96)).map((p) => ({ at: p.at, pitch: p.pitch + 3 })) : unrelated(1000 + q, 96);
    for (const w of windows(source, { window: W, hop: HOP })) if (w.points.length) out.push({ points: w.points, startGrains: toGrains(w.start) });
  }
  return out.slice(0, count);
}

async function main(): Promise<void> {
  const notes = arg('notes', 200_000);
  const count = arg('windows', 400);
  const dir = mkdtempSync(join(tmpdir(), 'earwitness-bench-shards-'));
  const points = synthCorpus({ notes, seed: 11 });
  const pieces = points.map((p, i) => {
    const ns = notesOf(p);
    return { path: `tune-${i}.mid`, title: null, beats: Math.max(...ns.map((n) => n.onset + n.duration)), key: estimateKey(ns), notes: ns };
  });
  const flat = flattenNotes(pieces);
  const infos = pieces.map(({ notes: _, ...info }) => info);
  const whole = join(dir, 'whole');
  await buildIndexFile(whole, { notes: flat, pieces: infos, files: [], percussion: false });
  const asked = probes(points, count);
  const request = { pitch: 'chromatic' as const, window: W, mode: EXACT_MODE };
  const one = openCorpus(whole).matcher(request);
  const reference = asked.map((w) => one.best(w));
  const redis = await startRedis();
  const rows: Record<string, unknown>[] = [];
  try {
    for (const k of [1, 2, 3]) {
      const manifestFile = join(dir, `shards-${k}.json`);
      await writeShards({ manifest: manifestFile, name: `bench${k}`, shards: k, notes: flat, pieces: infos, files: [], percussion: false });
      const manifest = readShardManifest(manifestFile);
      const local = openCorpus(manifestFile).matcher(request);
      let began = performance.now();
      const here = asked.map((w) => local.best(w));
      const localSeconds = (performance.now() - began) / 1000;
      const workers = await Promise.all(manifest.shards.map((_, i) => startWorker(redis.url, join(dir, `.earwitness-shard-${i + 1}-of-${k}`))));
      const loadBefore = loadavg()[0];
      began = performance.now();
      const queued = await matchOverQueue({ url: redis.url, manifestFile, manifest, request: { ...request, candidates: shardCandidates(manifest, request) }, windows: asked, timeoutSeconds: 60 });
      const seconds = (performance.now() - began) / 1000;
      await Promise.all(workers.map((w) => w.stop()));
      const same = (xs: unknown[]) => xs.filter((m, i) => JSON.stringify(m) === JSON.stringify(reference[i])).length;
      const scoreOf = (m: { score: number } | null): number => m?.score ?? 0;
      const row = {
        corpus: `${k} shard${k > 1 ? 's' : ''}`,
        notes: flat.at.length,
        shardNotes: manifest.shards.map((s) => s.notes).join(' / '),
        windows: asked.length,
        queueSeconds: Math.round(seconds * 100) / 100,
        queueWindowsPerSecond: Math.round(asked.length / seconds),
        localWindowsPerSecond: Math.round(asked.length / localSeconds),
        sameAsOneIndex: `${same(queued)} of ${asked.length}`,
        scoreAboveOneIndex: queued.filter((m, i) => scoreOf(m) > scoreOf(reference[i])).length,
        scoreBelowOneIndex: queued.filter((m, i) => scoreOf(m) < scoreOf(reference[i])).length,
        sameLocalAsQueue: here.every((m, i) => JSON.stringify(m) === JSON.stringify(queued[i])),
        loadAverage1min: `${loadBefore.toFixed(2)} → ${loadavg()[0].toFixed(2)}`,
      };
      process.stdout.write(`${JSON.stringify(row)}\n`);
      rows.push(row);
    }
  } finally {
    await redis.stop();
    rmSync(dir, { recursive: true, force: true });
  }
  const summary = { benchmark: 'shards over BullMQ (test/bench/shards.ts), exact mode, index candidates, one worker process a shard on this machine', rows };
  process.stdout.write(`${JSON.stringify(summary)}\n`);
  process.stderr.write(`results added to ${recordResults(summary)}\n`);
}

await main();
