/**
 * `--queue` URLs (bridge/queue/redis-url.ts): host, port, database, user and
 * password as the redis URI scheme writes them (IANA's provisional "redis"
 * scheme registration, from memory: redis://[[user]:password@]host[:port][/db]),
 * the password never shown in a message.
 */
import { describe, expect, it } from 'vitest';
import { redisConnection, shownUrl } from '../../../bridge/queue/redis-url.js';

describe('redis URLs', () => {
  it('reads host, port, database and a percent-encoded password', () => {
    expect(redisConnection('redis://:tide%20p%40ss@127.0.0.1:6390/2')).toEqual({ host: '127.0.0.1', port: 6390, password: 'tide p@ss', db: 2, maxRetriesPerRequest: null });
    expect(redisConnection('redis://worker:pw@queue.local')).toMatchObject({ host: 'queue.local', port: 6379, username: 'worker', password: 'pw', db: 0 });
  });

  it('shows a URL without its user and password', () => {
    expect(shownUrl('redis://:s3cret@127.0.0.1:6390/2')).toBe('redis://127.0.0.1:6390/2');
    expect(shownUrl('redis://u:s3cret@h:1')).not.toContain('s3cret');
  });

  it('refuses another scheme or a database that is not a number, the password not shown', () => {
    expect(() => redisConnection('http://:pw@h:1')).toThrow(/--queue http:\/\/h:1: the scheme is http, expected redis/);
    expect(() => redisConnection('redis://:pw@h:1/x')).toThrow(/database "x" is not a whole number/);
    expect(() => redisConnection('redis://:pw@h:1/x')).not.toThrow(/pw/);
  });
});
