/**
 * `earwitness worker --queue redis://HOST:PORT --corpus SHARD`: serves one
 * shard file of `corpus build --shards` from its queue until stopped
 * (Ctrl-C, SIGTERM) or until it refuses a job meant for another build or
 * checksum of the shard (then exit 2). Start one per shard, on any machine
 * that reaches Redis and holds the shard file (bridge/queue/shard-worker.ts).
 *
 * @example
 *   earwitness worker --queue redis://10.0.0.5:6379 --corpus songs/.earwitness-shard-2-of-3
 *   // stderr: earwitness: serving shard 2 of 3 (41 pieces) from songs/.earwitness-shard-2-of-3 on redis://10.0.0.5:6379, queue earwitness-songs-shard-2-of-3
 */
import type { Command } from 'commander';
import { serveShard } from '../../queue/shard-worker.js';
import { UsageError } from '../../formats/user-error.js';
import { tell } from '../notices.js';
import { positive } from '../../formats/user-error.js';
import { QUEUE_TIMEOUT_SECONDS } from '../batch-matching.js';

export function registerWorker(cli: Command): void {
  cli
    .command('worker')
    .description('serve one shard (from "corpus build --shards") to report, check, baseline and review run with --queue')
    .requiredOption('--queue <url>', 'the Redis the shards\' queues live on: redis://[:PASSWORD@]HOST:PORT')
    .requiredOption('--corpus <shard>', 'one shard index file the manifest lists')
    .option('--lock-seconds <s>', 'how long a batch stays taken without word from this worker: a worker killed mid-batch has its batch taken again after at most about twice this', positive('--lock-seconds'), 30)
    .option('--queue-timeout <s>', 'longest wait for Redis at start', positive('--queue-timeout'), QUEUE_TIMEOUT_SECONDS)
    .action(async (o: { queue: string; corpus: string; lockSeconds: number; queueTimeout: number }) => {
      const served = await serveShard({ url: o.queue, file: o.corpus, lockSeconds: o.lockSeconds, timeoutSeconds: o.queueTimeout, notify: tell });
      const stop = (): void => void served.close();
      process.once('SIGINT', stop);
      process.once('SIGTERM', stop);
      const refused = await served.closed;
      if (refused) throw new UsageError(`worker stopped: ${refused}`);
      tell('worker stopped');
    });
}
