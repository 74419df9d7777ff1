/**
 * `--queue redis://[USER:PASSWORD@]HOST:PORT[/DB]`: where the shards' queues
 * live, as BullMQ's connection options. A password in the URL is used to
 * log in and never shown again: messages name the server by `shownUrl`.
 *
 * @example
 *   redisConnection('redis://:s3cret@127.0.0.1:6390/2')
 *   // → { host: '127.0.0.1', port: 6390, password: 's3cret', db: 2, maxRetriesPerRequest: null }
 *   shownUrl('redis://:s3cret@127.0.0.1:6390/2')   // → 'redis://127.0.0.1:6390/2'
 */
import { UsageError } from '../formats/user-error.js';

export interface RedisConnection {
  host: string;
  port: number;
  username?: string;
  password?: string;
  db: number;
  /** BullMQ's workers block on Redis: a request is never given up on (the client's own timeout ends a wait). */
  maxRetriesPerRequest: null;
}

const HINT = 'give it as redis://HOST:PORT, or redis://:PASSWORD@HOST:PORT';

export function redisConnection(url: string): RedisConnection {
  let u: URL;
  try {
    u = new URL(url);
  } catch {
    throw new UsageError(`--queue ${shownUrl(url)}: not a URL; ${HINT}`);
  }
  if (u.protocol !== 'redis:') throw new UsageError(`--queue ${shownUrl(url)}: the scheme is ${u.protocol.replace(':', '')}, expected redis; ${HINT}`);
  if (!u.hostname) throw new UsageError(`--queue ${shownUrl(url)}: no host; ${HINT}`);
  const db = u.pathname.length > 1 ? Number(u.pathname.slice(1)) : 0;
  if (!(Number.isInteger(db) && db >= 0)) throw new UsageError(`--queue ${shownUrl(url)}: database "${u.pathname.slice(1)}" is not a whole number; ${HINT}/DB`);
  return {
    host: u.hostname.replace(/^\[|\]$/g, ''),
    port: u.port ? Number(u.port) : 6379,
    ...(u.username ? { username: decodeURIComponent(u.username) } : {}),
    ...(u.password ? { password: decodeURIComponent(u.password) } : {}),
    db,
    maxRetriesPerRequest: null,
  };
}

/** The URL with any user name and password left out, for messages. */
export function shownUrl(url: string): string {
  try {
    const u = new URL(url);
    u.username = '';
    u.password = '';
    return u.toString().replace(/\/$/, '');
  } catch {
    return url.replace(/\/\/[^@/]*@/, '//');
  }
}
