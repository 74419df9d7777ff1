/**
 * Whether Redis answers, within a stated time: a PING over a connection
 * that stops retrying at the deadline. An unreachable server, a wrong
 * password or a timeout is a UsageError saying which, never a hang.
 *
 * @example
 *   await reachRedis('redis://127.0.0.1:6379', redisConnection('redis://127.0.0.1:6379'), 10);
 *   // throws: --queue redis://127.0.0.1:6379: Redis did not answer within 10 s (connect ECONNREFUSED 127.0.0.1:6379); is redis-server running there?
 */
import { UsageError } from '../formats/user-error.js';
import type { RedisConnection } from './redis-url.js';
import { shownUrl } from './redis-url.js';

export async function reachRedis(url: string, connection: RedisConnection, seconds: number): Promise<void> {
  const deadline = Date.now() + seconds * 1000;
  let last = 'no answer';
  const refusedLogin = (why: string): boolean => /NOAUTH|WRONGPASS|invalid password|invalid username-password/i.test(why);
  // Loaded here, not with the module, as bullmq is (queue-matcher.ts).
  const { Redis } = await import('ioredis');
  const client = new Redis({
    ...connection,
    lazyConnect: true,
    maxRetriesPerRequest: 0,
    connectTimeout: Math.max(500, Math.min(5000, seconds * 1000)),
    // A refused login will not change by asking again.
    retryStrategy: () => (Date.now() < deadline && !refusedLogin(last) ? 250 : null),
  });
  client.on('error', (e: Error) => (last = e.message));
  let timer: NodeJS.Timeout | undefined;
  try {
    const timeout = new Promise<never>((_, reject) => (timer = setTimeout(() => reject(new Error(last)), seconds * 1000)));
    await Promise.race([client.connect().then(() => client.ping()), timeout]);
  } catch (e) {
    const why = [(e as Error).message, last].find(refusedLogin) ?? last;
    if (refusedLogin(why)) throw new UsageError(`--queue ${shownUrl(url)}: Redis refused the login (${why}); give the password as redis://:PASSWORD@HOST:PORT`);
    throw new UsageError(`--queue ${shownUrl(url)}: Redis did not answer within ${seconds} s (${why}); is redis-server running there?`);
  } finally {
    clearTimeout(timer);
    client.disconnect();
  }
}
