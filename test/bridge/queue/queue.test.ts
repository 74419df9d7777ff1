/**
 * Shards served by `earwitness worker` over a real Redis (Debian's
 * redis-server, started by the test on a free loopback port): report, check
 * and baseline with `--queue` equal the one index of the same corpus, window
 * for window; a worker SIGKILLed mid-batch and started again loses nothing;
 * Redis unreachable, a shard with no worker, a worker refusing a shard that
 * does not match: exit 2 with a clear message within --queue-timeout; a
 * password in the URL works. Corpora: the invented demo corpus
 * (presets/demo) and a synthetic one (test/bench/synthetic.ts) written as
 * MIDI with npm's @tonejs/midi.
 *
 * @example
 *   npx tsc -p tsconfig.json && npx vitest run test/bridge/queue/queue.test.ts
 */
import { type SpawnSyncReturns, spawn, spawnSync } from 'node:child_process';
import { cpSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import tonejs from '@tonejs/midi';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { GRAINS_PER_BEAT } from '../../../core/note.js';
import { synthCorpus } from '../../bench/synthetic.js';
import { CLI, ROOT, tempDir } from '../../helpers/daemon.js';
import { tool } from '../../helpers/which.js';
import { type TestRedis, type TestWorker, freePort, startRedis, startWorker } from '../../helpers/redis.js';

const redisServer = tool('redis-server', 'redis-server');
const dir = tempDir('queue');
const queries = join(ROOT, 'presets/demo/queries');

const run = (...args: string[]): Promise<{ code: number | null; out: string; err: string; seconds: number }> =>
  new Promise((resolve) => {
    const began = performance.now();
    const child = spawn(process.execPath, [CLI, ...args], { cwd: dir });
    let out = '';
    let err = '';
    child.stdout.on('data', (c: Buffer) => (out += c));
    child.stderr.on('data', (c: Buffer) => (err += c));
    child.on('exit', (code) => resolve({ code, out, err, seconds: (performance.now() - began) / 1000 }));
  });

const runSync = (...args: string[]): SpawnSyncReturns<string> => spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', cwd: dir });

/** A corpus folder with its one index and its shards. */
function shardedCopy(name: string, source: string, shards: number): { manifest: string; index: string; shard: (k: number) => string } {
  const corpus = join(dir, name);
  cpSync(source, corpus, { recursive: true });
  expect(runSync('corpus', 'build', corpus).status).toBe(0);
  expect(runSync('corpus', 'build', corpus, '--shards', String(shards)).status).toBe(0);
  return { manifest: join(corpus, '.earwitness-shards.json'), index: join(corpus, '.earwitness-index'), shard: (k) => join(corpus, `.earwitness-shard-${k}-of-${shards}`) };
}

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe.skipIf(!redisServer.path)(`sharded matching over ${redisServer.label}`, () => {
  let redis: TestRedis;
  let workers: TestWorker[] = [];
  const demo = () => shardedCopy('demo', join(ROOT, 'presets/demo/corpus'), 3);
  let corpus: ReturnType<typeof demo>;

  beforeAll(async () => {
    redis = await startRedis();
    corpus = demo();
  }, 60_000);
  afterAll(async () => {
    await Promise.all(workers.map((w) => w.stop()));
    await redis?.stop();
  });

  describe('three workers, one per shard', () => {
    beforeAll(async () => {
      workers = await Promise.all([1, 2, 3].map((k) => startWorker(redis.url, corpus.shard(k))));
    }, 60_000);
    afterAll(async () => {
      await Promise.all(workers.map((w) => w.stop()));
      workers = [];
    });

    const same = async (...args: string[]) => {
      const one = await run(...args, '--corpus', corpus.index, '--json');
      const shards = await run(...args, '--corpus', corpus.manifest, '--queue', redis.url, '--json');
      expect(shards.err).toBe('');
      expect(shards.code).toBe(one.code);
      return { one: JSON.parse(one.out), shards: JSON.parse(shards.out) };
    };

    it('report: the same JSON as the one index, window for window', async () => {
      const { one, shards } = await same('report', queries);
      expect(one.queries.flatMap((q: { windows: unknown[] }) => q.windows).length).toBeGreaterThan(10);
      expect(shards).toEqual(one);
    }, 60_000);

    it('report within a tolerance, and check: the same', async () => {
      const r = await same('report', queries, '--tolerance', '0.1');
      expect(r.shards).toEqual(r.one);
      const c = await same('check', queries, '--min-originality', '0.5');
      expect(c.shards).toEqual(c.one);
    }, 60_000);

    it('baseline: the left-out piece left out across shards, the same', async () => {
      const { one, shards } = await same('baseline', '--samples', '12');
      expect(shards).toEqual(one);
    }, 60_000);
  });

  it('a shard with no worker: exit 2 within --queue-timeout, naming the shard', async () => {
    const two = await Promise.all([1, 2].map((k) => startWorker(redis.url, corpus.shard(k))));
    try {
      const r = await run('report', queries, '--corpus', corpus.manifest, '--queue', redis.url, '--queue-timeout', '3');
      expect(r.code).toBe(2);
      expect(r.err).toMatch(/no worker serves shard 3 \(.*shard-3-of-3\) after 3 s; start one with: earwitness worker --queue redis:\/\/127\.0\.0\.1:\d+ --corpus/);
      expect(r.seconds).toBeLessThan(3 + 5);
    } finally {
      await Promise.all(two.map((w) => w.stop()));
    }
  }, 60_000);

  it('Redis unreachable: exit 2 within --queue-timeout, saying so', async () => {
    const port = await freePort();
    const r = await run('report', queries, '--corpus', corpus.manifest, '--queue', `redis://127.0.0.1:${port}`, '--queue-timeout', '2');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(new RegExp(`--queue redis://127\\.0\\.0\\.1:${port}: Redis did not answer within 2 s \\(.*ECONNREFUSED.*\\); is redis-server running there\\?`));
    expect(r.seconds).toBeLessThan(2 + 5);
  }, 30_000);

  it('a worker serving a shard of another build refuses its jobs; the report exits 2 saying why', async () => {
    // The same corpus built again elsewhere: the same queue names, another build and checksum.
    mkdirSync(join(dir, 'elsewhere'));
    const other = join(dir, 'elsewhere', 'demo');
    cpSync(join(ROOT, 'presets/demo/corpus'), other, { recursive: true });
    expect(runSync('corpus', 'build', other, '--shards', '3').status).toBe(0);
    const expected = JSON.parse(readFileSync(corpus.manifest, 'utf8'));
    const w = await startWorker(redis.url, join(other, '.earwitness-shard-1-of-3'));
    const others = await Promise.all([2, 3].map((k) => startWorker(redis.url, corpus.shard(k))));
    try {
      const r = await run('report', queries, '--corpus', corpus.manifest, '--queue', redis.url, '--queue-timeout', '10');
      expect(r.code).toBe(2);
      expect(r.err).toMatch(new RegExp(`shard 1 .*refused by the worker of earwitness-demo-shard-1-of-3: the job is for shard 1 of build ${expected.build} with checksum ${expected.shards[0].crc}; .*elsewhere/demo/.earwitness-shard-1-of-3 is shard 1 of build (?!${expected.build})[0-9a-f]{16} with checksum`));
      await new Promise<void>((resolve) => (w.child.exitCode !== null ? resolve() : w.child.once('exit', () => resolve())));
      expect(w.child.exitCode).toBe(2);
      expect(w.output()).toMatch(/refused a job/);
    } finally {
      await Promise.all([w, ...others].map((x) => x.stop()));
    }
  }, 60_000);

  it('a worker refuses a whole index, and the manifest itself', async () => {
    const whole = runSync('worker', '--queue', redis.url, '--corpus', corpus.index);
    expect(whole.status).toBe(2);
    expect(whole.stderr).toMatch(/a whole corpus index, not a shard; write shards with: earwitness corpus build DIR --shards K/);
    const manifest = runSync('worker', '--queue', redis.url, '--corpus', corpus.manifest);
    expect(manifest.status).toBe(2);
    expect(manifest.stderr).toMatch(/a worker serves one shard file, not the manifest/);
  }, 30_000);
});

describe.skipIf(!redisServer.path)(`a worker killed mid-batch (${redisServer.label})`, () => {
  const { Midi } = tonejs;
  let redis: TestRedis;
  const workers: TestWorker[] = [];
  const synth = join(dir, 'synth-source');
  const quote = join(dir, 'quote.mid');

  /** A type-1 SMF at 480 ticks a beat (SMF 1.0), one track, written by @tonejs/midi. */
  const midiFile = (file: string, points: readonly { at: number; pitch: number }[]): void => {
    const midi = new Midi();
    const track = midi.addTrack();
    for (const p of points) track.addNote({ midi: p.pitch, ticks: Math.round((p.at / GRAINS_PER_BEAT) * 480), durationTicks: 240, velocity: 0.7 });
    writeFileSync(file, midi.toArray());
  };

  beforeAll(async () => {
    redis = await startRedis();
    mkdirSync(synth);
    const pieces = synthCorpus({ notes: 3_000, seed: 5 });
    pieces.forEach((points, i) => midiFile(join(synth, `tune-${i}.mid`), points));
    midiFile(quote, pieces[1].filter((p) => p.at < 64 * GRAINS_PER_BEAT));
  }, 60_000);
  afterAll(async () => {
    await Promise.all(workers.map((w) => w.stop()));
    await redis?.stop();
  });

  it('its batch is taken again once the lock lapses, and the report equals the one index', async () => {
    const corpus = shardedCopy('synth', synth, 2);
    // --exact: every translation verified, so a batch of windows takes a while.
    const args = ['report', quote, '--exact', '--hop', '1', '--json'];
    const one = await run(...args, '--corpus', corpus.index);
    expect(one.code, one.err).toBe(0);
    workers.push(...(await Promise.all([1, 2].map((k) => startWorker(redis.url, corpus.shard(k), ['--lock-seconds', '2'])))));
    const report = run(...args, '--corpus', corpus.manifest, '--queue', redis.url, '--queue-timeout', '30');
    // Kill shard 2's worker while it holds a batch (BullMQ's active list), then start another.
    const watch = new Redis(redis.url);
    const active = 'bull:earwitness-synth-shard-2-of-2:active';
    for (let i = 0; i < 400 && (await watch.llen(active)) === 0; i++) await new Promise((r) => setTimeout(r, 25));
    expect(await watch.llen(active)).toBe(1);
    workers[1].child.kill('SIGKILL');
    await new Promise((r) => setTimeout(r, 500));
    expect(await watch.llen(active)).toBe(1);
    watch.disconnect();
    workers.push(await startWorker(redis.url, corpus.shard(2), ['--lock-seconds', '2']));
    const r = await report;
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out)).toEqual(JSON.parse(one.out));
  }, 180_000);
});

describe.skipIf(!redisServer.path)(`a password in the URL (${redisServer.label})`, () => {
  let redis: TestRedis;
  let workers: TestWorker[] = [];
  let corpus: ReturnType<typeof shardedCopy>;

  beforeAll(async () => {
    redis = await startRedis({ password: 'tide p@ss' });
    corpus = shardedCopy('locked', join(ROOT, 'presets/demo/corpus'), 2);
  }, 60_000);
  afterAll(async () => {
    await Promise.all(workers.map((w) => w.stop()));
    await redis?.stop();
  });

  it('workers and the report log in with it; the report equals the one index', async () => {
    expect(redis.url).toContain(':tide%20p%40ss@');
    workers = await Promise.all([1, 2].map((k) => startWorker(redis.url, corpus.shard(k))));
    for (const w of workers) expect(w.output()).not.toContain('tide');
    const one = await run('report', queries, '--corpus', corpus.index, '--json');
    const shards = await run('report', queries, '--corpus', corpus.manifest, '--queue', redis.url, '--json');
    expect(shards.code, shards.err).toBe(0);
    expect(JSON.parse(shards.out)).toEqual(JSON.parse(one.out));
  }, 60_000);

  it('a wrong password: exit 2, saying the login was refused, the password not shown', async () => {
    const r = await run('report', queries, '--corpus', corpus.manifest, '--queue', `redis://:wrong@127.0.0.1:${redis.port}`, '--queue-timeout', '3');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--queue redis:\/\/127\.0\.0\.1:\d+: Redis refused the login/);
    expect(r.err).not.toContain('wrong@');
  }, 30_000);
});
