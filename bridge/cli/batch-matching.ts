/**
 * How `report`, `check`, `baseline` and `review` get their windows matched:
 * in this process through `--corpus` (a folder, an index, or every shard of
 * a manifest), or with `--queue redis://…` by the shards' workers
 * (bridge/queue/queue-matcher.ts). With a queue the command's work runs
 * twice: once to learn which windows it asks for (core/recorded-matcher.ts),
 * then, once the workers have answered, with those answers; progress comes
 * from the workers' jobs.
 *
 * @example
 *   const report = await withMatcher(opened, flags, 'scoring', (matcher, tick) => originalityReport(queries, view, matcher, shape, tick));
 */
import { Option } from 'commander';
import type { WindowMatcher } from '../../core/match.js';
import { recordingMatcher, replayingMatcher } from '../../core/recorded-matcher.js';
import type { Progress } from '../../core/report.js';
import type { MatcherRequest, OpenedCorpus } from '../corpus/open-corpus.js';
import { shardCandidates } from '../corpus/sharded-corpus.js';
import { looksLikeManifest, readShardManifest } from '../formats/shard-manifest.js';
import { UsageError } from '../formats/user-error.js';
import { matchOverQueue } from '../queue/queue-matcher.js';
import { progressBar } from './progress.js';
import { positive } from '../formats/user-error.js';

export interface QueueFlags {
  /** redis://HOST:PORT: match on the shards' workers. */
  queue?: string;
  queueTimeout: number;
}

/** Seconds a queue waits for Redis, for workers, and for word from a busy shard, unless told otherwise. */
export const QUEUE_TIMEOUT_SECONDS = 30;

export const queueOption = () => new Option('--queue <url>', 'match on the shards\' workers through Redis (redis://[:PASSWORD@]HOST:PORT); --corpus names the shard manifest');
export const queueTimeoutOption = () =>
  new Option('--queue-timeout <s>', 'with --queue: longest wait for Redis, for a worker on every shard, and for word from a shard with work waiting (then exit 2)').argParser(positive('--queue-timeout')).default(QUEUE_TIMEOUT_SECONDS);

/** Whether the corpus should be opened for matching here (false with --queue: the workers match). */
export const matchesHere = (flags: QueueFlags): boolean => flags.queue === undefined;

export async function withMatcher<T>(opened: OpenedCorpus, flags: QueueFlags & { corpus: string }, request: MatcherRequest, label: string, compute: (matcher: WindowMatcher, progress?: Progress) => T): Promise<T> {
  if (flags.queue === undefined) {
    const bar = progressBar(label);
    try {
      return compute(opened.matcher(request), bar.tick);
    } finally {
      bar.stop();
    }
  }
  if (!looksLikeManifest(flags.corpus)) throw new UsageError(`--queue: --corpus ${flags.corpus} is not a shard manifest; write one with: earwitness corpus build DIR --shards K, and start a worker per shard`);
  const manifest = readShardManifest(flags.corpus);
  const recorded = recordingMatcher(request.window);
  compute(recorded.matcher);
  const bars = { matching: progressBar(`${label} on the workers`), counting: progressBar('counting pieces holding each match') };
  try {
    const matches = await matchOverQueue({
      url: flags.queue,
      manifestFile: flags.corpus,
      manifest,
      request: { pitch: request.pitch, window: request.window, mode: request.mode, candidates: shardCandidates(manifest, request) },
      windows: recorded.windows,
      timeoutSeconds: flags.queueTimeout,
      progress: (round, done, total) => {
        if (round === 'counting') bars.matching.stop();
        bars[round].tick(done, total);
      },
    });
    return compute(replayingMatcher(request.window, recorded.windows, matches));
  } finally {
    bars.matching.stop();
    bars.counting.stop();
  }
}
