/**
 * `earwitness worker`: serves one shard file from its BullMQ queue. It
 * takes one batch at a time, answers each window (core/shards.ts: its best
 * match, or the pieces holding some material), tells progress as it goes,
 * and yields between windows so its lock on the job is renewed; a worker
 * killed mid-batch leaves the job to be taken again once its lock lapses
 * (BullMQ's stalled jobs). A job meant for another build or checksum of the
 * shard is refused: the job fails with the reason, and the worker stops.
 *
 * @example
 *   const served = await serveShard({ url: 'redis://127.0.0.1:6379', file: 'songs/.earwitness-shard-2-of-3', notify: console.error });
 *   await served.closed;   // until stopped, or a job it must refuse
 */
import { setImmediate as yieldNow } from 'node:timers/promises';
import type { Job } from 'bullmq';
import { type ShardMatcher, shardMatcher } from '../../core/shards.js';
import { type ShardOf, readIndexCrc, readIndexMeta } from '../formats/index-file.js';
import { UsageError } from '../formats/user-error.js';
import { openCorpus } from '../corpus/open-corpus.js';
import { looksLikeManifest } from '../formats/shard-manifest.js';
import { redisConnection, shownUrl } from './redis-url.js';
import { type JobData, type WireAnswer, type WireRequest, matchWindow, pointsOf, queueName, wireAnswer } from './wire.js';
import { reachRedis } from './reach.js';

export interface WorkerOptions {
  url: string;
  /** A shard index file written by `corpus build --shards`. */
  file: string;
  /** How long a job's lock lasts without renewal (longer than one window takes): a killed worker's batch is taken again after at most about twice this. */
  lockSeconds?: number;
  /** How long to try reaching Redis at start. */
  timeoutSeconds?: number;
  notify: (line: string) => void;
}

export interface ServedShard {
  shard: ShardOf;
  queue: string;
  /** Resolves when the worker has stopped: with null when told to, or with the reason it refused a job. */
  closed: Promise<string | null>;
  close(): Promise<void>;
}

/** Windows answered between progress reports. */
const PROGRESS_EVERY = 8;

/** The shard's identity from its META; a whole index or a manifest is refused. */
function shardOf(file: string): ShardOf {
  if (looksLikeManifest(file)) throw new UsageError(`--corpus ${file}: a worker serves one shard file, not the manifest; start one worker per shard the manifest lists`);
  const shard = readIndexMeta(file).shard;
  if (!shard) throw new UsageError(`--corpus ${file}: a whole corpus index, not a shard; write shards with: earwitness corpus build DIR --shards K`);
  return shard;
}

export async function serveShard(options: WorkerOptions): Promise<ServedShard> {
  let shard: ShardOf;
  let crc: string;
  try {
    shard = shardOf(options.file);
    crc = readIndexCrc(options.file);
  } catch (e) {
    throw e instanceof UsageError ? e : new UsageError(`--corpus ${options.file}: ${(e as Error).message}`);
  }
  const opened = openCorpus(options.file);
  const matchers = new Map<string, ShardMatcher>();
  const matcherFor = (r: WireRequest): ShardMatcher => {
    const key = JSON.stringify(r);
    return matchers.get(key) ?? matchers.set(key, shardMatcher(opened.matchCorpus(r.pitch), { windowBeats: r.window, mode: r.mode, candidates: r.candidates, firstPiece: shard.firstPiece })).get(key)!;
  };
  const connection = redisConnection(options.url);
  await reachRedis(options.url, connection, options.timeoutSeconds ?? 10);
  const { UnrecoverableError, Worker } = await import('bullmq');
  const queue = queueName(shard);
  let refused: string | null = null;
  let stop: (why: string | null) => void = () => {};
  const closed = new Promise<string | null>((resolve) => (stop = resolve));

  const process = async (job: Job<JobData>): Promise<WireAnswer[] | number[]> => {
    const d = job.data;
    if (d.build !== shard.build || d.crc !== crc || d.number !== shard.number) {
      refused = `the job is for shard ${d.number} of build ${d.build} with checksum ${d.crc}; ${options.file} is shard ${shard.number} of build ${shard.build} with checksum ${crc}. Start this worker with the shard file the manifest lists, or build the shards again`;
      throw new UnrecoverableError(`refused by the worker of ${queue}: ${refused}`);
    }
    const matcher = matcherFor(d.request);
    const total = d.round === 'best' ? d.windows.length : d.items.length;
    const out: (WireAnswer | number)[] = [];
    for (let i = 0; i < total; i++) {
      if (d.round === 'best') out.push(wireAnswer(matcher.best(matchWindow(d.windows[i]))));
      else out.push(matcher.count(pointsOf(d.items[i].material), d.items[i].exclude ?? undefined));
      // Between windows the lock's renewal timer gets its turn.
      await yieldNow();
      if ((i + 1) % PROGRESS_EVERY === 0 || i + 1 === total) await job.updateProgress(i + 1);
    }
    return out as WireAnswer[] | number[];
  };

  const lockDuration = (options.lockSeconds ?? 30) * 1000;
  const worker = new Worker<JobData>(queue, process, { connection, concurrency: 1, lockDuration, stalledInterval: lockDuration, maxStalledCount: 10, autorun: false });
  worker.on('failed', (_job, e) => {
    if (refused) {
      options.notify(`refused a job: ${refused}`);
      void worker.close().then(() => stop(refused));
    } else options.notify(`a batch failed: ${e.message}`);
  });
  worker.on('error', (e) => options.notify(`queue error: ${e.message}`));
  void worker.run();
  await worker.waitUntilReady();
  options.notify(`serving shard ${shard.number} of ${shard.of} (${opened.corpus.pieces.length} pieces) from ${options.file} on ${shownUrl(options.url)}, queue ${queue}`);
  return {
    shard,
    queue,
    closed,
    close: async () => {
      await worker.close();
      stop(null);
    },
  };
}
