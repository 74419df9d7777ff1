/**
 * `--queue redis://… --corpus MANIFEST`: windows matched by the shards'
 * workers (bridge/queue/shard-worker.ts). Windows go in batches onto every
 * shard's queue; the answers merge per window as in one process
 * (core/shards.ts): the best match wins, then the other shards count the
 * pieces holding its material, summed. Progress comes from the jobs'
 * progress events. Redis unreachable, a shard with no worker, or no word
 * from a shard's queue for `timeoutSeconds`, is a UsageError naming the
 * shard and how to start its worker, never a hang.
 *
 * @example
 *   const matches = await matchOverQueue({ url, manifestFile, manifest, request, windows, timeoutSeconds: 30 });
 *   matches[0]   // → { piece: 12, ..., score: 1, distinctiveness: 0.5 }, as the one index answers
 */
import type { Job, Queue, QueueEvents } from 'bullmq';
import type { MatchWindow, WindowMatch } from '../../core/match.js';
import { finishMatch, needsCount, winningAnswer } from '../../core/shards.js';
import { type ShardManifest, shardPath } from '../formats/shard-manifest.js';
import { UsageError } from '../formats/user-error.js';
import { type RedisConnection, redisConnection, shownUrl } from './redis-url.js';
import { reachRedis } from './reach.js';
import { type JobData, type WireAnswer, type WireRequest, flatPoints, queueName, shardAnswer, wireWindow } from './wire.js';

export interface QueueMatchOptions {
  url: string;
  manifestFile: string;
  manifest: ShardManifest;
  request: WireRequest;
  windows: readonly MatchWindow[];
  /** Longest wait for Redis, for a worker on every shard, and between two words from a shard with work outstanding. */
  timeoutSeconds: number;
  /** Told windows answered so far over all shards, and the total, as each round goes. */
  progress?: (round: 'matching' | 'counting', done: number, total: number) => void;
}

/** Windows a job carries. */
export const BATCH_WINDOWS = 64;

interface Shard {
  number: number;
  queue: Queue;
  events: QueueEvents;
  file: string;
}

const startHint = (o: QueueMatchOptions, s: Shard): string => `start one with: earwitness worker --queue ${shownUrl(o.url)} --corpus ${s.file}`;

async function openShards(o: QueueMatchOptions, connection: RedisConnection): Promise<Shard[]> {
  // Loaded here, not with the module: every command that may take --queue would otherwise load it at start.
  const { Queue, QueueEvents } = await import('bullmq');
  const shards = o.manifest.shards.map((entry, k) => {
    const name = queueName({ name: o.manifest.name, number: k + 1, of: o.manifest.shards.length });
    return { number: k + 1, queue: new Queue(name, { connection }), events: new QueueEvents(name, { connection }), file: shardPath(o.manifestFile, entry) };
  });
  await Promise.all(shards.flatMap((s) => [s.queue.waitUntilReady(), s.events.waitUntilReady()]));
  return shards;
}

/** Waits until every shard's queue has a worker, or says which have none. */
async function awaitWorkers(o: QueueMatchOptions, shards: readonly Shard[]): Promise<void> {
  const deadline = Date.now() + o.timeoutSeconds * 1000;
  for (;;) {
    const counts = await Promise.all(shards.map((s) => s.queue.getWorkersCount()));
    const idle = shards.filter((_, k) => counts[k] === 0);
    if (idle.length === 0) return;
    if (Date.now() >= deadline) {
      throw new UsageError(`--queue ${shownUrl(o.url)}: no worker serves ${idle.map((s) => `shard ${s.number} (${s.file})`).join(', ')} after ${o.timeoutSeconds} s; ${startHint(o, idle[0])}`);
    }
    await new Promise((r) => setTimeout(r, 200));
  }
}

/**
 * One round: `payloads[k]` are shard k's jobs; resolves with each job's
 * result, shard by shard, in order. Rejects when a job fails (a worker
 * refused it, say) or a shard with work outstanding says nothing for the timeout.
 */
async function runRound<R>(o: QueueMatchOptions, shards: readonly Shard[], payloads: JobData[][], tell: (done: number) => void): Promise<R[][]> {
  const results = payloads.map((p) => new Array<R>(p.length));
  const where = new Map<string, { shard: number; at: number }>();
  const progress = new Map<string, number>();
  let outstanding = payloads.reduce((n, p) => n + p.length, 0);
  if (outstanding === 0) return results;
  const sizeOf = (d: JobData): number => (d.round === 'best' ? d.windows.length : d.items.length);
  let finish: (e?: Error) => void = () => {};
  const done = new Promise<void>((resolve, reject) => (finish = (e) => (e ? reject(e) : resolve())));
  let heard = Date.now();
  const early = new Map<string, () => void>();
  const listeners = shards.map((s, k) => {
    const on = {
      completed: ({ jobId, returnvalue }: { jobId: string; returnvalue: unknown }) => handle(k, jobId, () => {
        const w = where.get(`${k}:${jobId}`)!;
        results[k][w.at] = returnvalue as R;
        progress.set(`${k}:${jobId}`, sizeOf(payloads[k][w.at]));
        where.delete(`${k}:${jobId}`);
        if (--outstanding === 0) finish();
      }),
      failed: ({ jobId, failedReason }: { jobId: string; failedReason: string }) => handle(k, jobId, () => finish(new UsageError(`shard ${s.number} (${s.file}): ${failedReason}`))),
      progress: ({ jobId, data }: { jobId: string; data: unknown }) => handle(k, jobId, () => progress.set(`${k}:${jobId}`, Number(data) || 0)),
    };
    s.events.on('completed', on.completed);
    s.events.on('failed', on.failed);
    s.events.on('progress', on.progress);
    return on;
  });
  function handle(k: number, jobId: string, act: () => void): void {
    heard = Date.now();
    if (where.has(`${k}:${jobId}`)) {
      act();
      tell([...progress.values()].reduce((a, b) => a + b, 0));
    } else early.set(`${k}:${jobId}`, act);
  }
  const added = await Promise.all(shards.map((s, k) => s.queue.addBulk(payloads[k].map((data) => ({ name: data.round, data, opts: { removeOnComplete: true, removeOnFail: true } })))));
  added.forEach((jobs: Job[], k) => jobs.forEach((job, at) => where.set(`${k}:${job.id}`, { shard: k, at })));
  for (const [key, act] of early) if (where.has(key)) act();
  const watch = setInterval(() => {
    if (Date.now() - heard < o.timeoutSeconds * 1000) return;
    const silent = [...new Set([...where.values()].map((w) => w.shard))].map((k) => shards[k]);
    finish(new UsageError(`--queue ${shownUrl(o.url)}: no word from ${silent.map((s) => `shard ${s.number} (${s.file})`).join(', ')} for ${o.timeoutSeconds} s with work waiting; is its worker still running? ${startHint(o, silent[0])}`));
  }, 250);
  try {
    await done;
    return results;
  } finally {
    clearInterval(watch);
    shards.forEach((s, k) => {
      s.events.off('completed', listeners[k].completed);
      s.events.off('failed', listeners[k].failed);
      s.events.off('progress', listeners[k].progress);
    });
    // Jobs of a round given up on are taken back, so no worker spends time on them later.
    await Promise.all([...where.keys()].map((key) => {
      const [k, id] = key.split(':');
      return shards[Number(k)].queue.remove(id).catch(() => 0);
    }));
  }
}

/** `items` cut into runs of `size`. */
const batches = <T>(items: readonly T[], size: number): T[][] => Array.from({ length: Math.ceil(items.length / size) }, (_, i) => items.slice(i * size, (i + 1) * size));

export async function matchOverQueue(o: QueueMatchOptions): Promise<(WindowMatch | null)[]> {
  const connection = redisConnection(o.url);
  await reachRedis(o.url, connection, o.timeoutSeconds);
  const shards = await openShards(o, connection);
  try {
    await awaitWorkers(o, shards);
    const base = { build: o.manifest.build, request: o.request };
    const ids = (k: number) => ({ ...base, number: k + 1, crc: o.manifest.shards[k].crc });
    const windowBatches = batches(o.windows, BATCH_WINDOWS);
    const total = o.windows.length * shards.length;
    const round1 = await runRound<WireAnswer[]>(o, shards, shards.map((_, k) => windowBatches.map((b): JobData => ({ ...ids(k), round: 'best', windows: b.map(wireWindow) }))), (done) => o.progress?.('matching', done, total));
    const answers = o.windows.map((_, i) => shards.map((_, k) => shardAnswer(round1[k][Math.floor(i / BATCH_WINDOWS)][i % BATCH_WINDOWS])));
    const won = answers.map((a) => winningAnswer(a));
    // Round two: each shard counts the winners' material it did not find itself.
    const asks = shards.map((_, k) => won.flatMap((w, i) => (w && w.shard !== k && needsCount(w.answer) ? [i] : [])));
    const countTotal = asks.reduce((n, a) => n + a.length, 0);
    const round2 = await runRound<number[]>(o, shards, asks.map((a, k) => batches(a, BATCH_WINDOWS).map((b): JobData => ({ ...ids(k), round: 'count', items: b.map((i) => ({ material: flatPoints(won[i]!.answer.material), exclude: o.windows[i].exclude ?? null })) }))), (done) => o.progress?.('counting', done, countTotal));
    const counted = asks.map((a, k) => new Map(a.map((i, j) => [i, round2[k][Math.floor(j / BATCH_WINDOWS)][j % BATCH_WINDOWS]])));
    return won.map((w, i) => (w ? finishMatch(w.answer, needsCount(w.answer) ? shards.map((_, k) => (k === w.shard ? w.answer.holding : counted[k].get(i)!)) : [], true) : null));
  } finally {
    await Promise.all(shards.flatMap((s) => [s.queue.close(), s.events.close()]));
  }
}
