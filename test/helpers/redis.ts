/**
 * A Redis of the test's own (Debian's redis-server): on a free loopback
 * port, in a temporary folder, saving nothing, stopped after; and the
 * `earwitness worker` processes that serve shards from it.
 *
 * @example
 *   const redis = await startRedis({ password: 'pw' });   // redis.url → 'redis://:pw@127.0.0.1:40123'
 *   const w = await startWorker(redis.url, 'corpus/.earwitness-shard-1-of-3');
 *   w.kill('SIGKILL'); await redis.stop();
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { createServer } from 'node:net';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { CLI } from './daemon.js';

/** A port nothing listens on now: the kernel's pick for a socket bound and closed. */
export const freePort = (): Promise<number> =>
  new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as { port: number };
      server.close(() => resolve(port));
    });
  });

export interface TestRedis {
  url: string;
  port: number;
  stop(): Promise<void>;
}

/** Waits until `child` writes `pattern` to stdout or stderr, or fails after `ms`. */
export function waitForOutput(child: ChildProcess, pattern: RegExp, ms: number): Promise<string> {
  return new Promise((resolve, reject) => {
    let seen = '';
    const timer = setTimeout(() => reject(new Error(`no ${pattern} within ${ms} ms; output so far:\n${seen}`)), ms);
    const look = (chunk: Buffer): void => {
      seen += chunk.toString();
      if (pattern.test(seen)) {
        clearTimeout(timer);
        resolve(seen);
      }
    };
    child.stdout?.on('data', look);
    child.stderr?.on('data', look);
    child.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`exited with ${code} before ${pattern}; output:\n${seen}`));
    });
  });
}

const exited = (child: ChildProcess): Promise<void> => new Promise((resolve) => (child.exitCode !== null || child.signalCode !== null ? resolve() : child.once('exit', () => resolve())));

export async function startRedis(options: { password?: string } = {}): Promise<TestRedis> {
  const port = await freePort();
  const dir = mkdtempSync(join(tmpdir(), 'earwitness-redis-'));
  const args = ['--port', String(port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no', '--dir', dir, ...(options.password ? ['--requirepass', options.password] : [])];
  const child = spawn('redis-server', args, { stdio: ['ignore', 'pipe', 'pipe'] });
  await waitForOutput(child, /Ready to accept connections/, 10_000);
  return {
    port,
    url: `redis://${options.password ? `:${encodeURIComponent(options.password)}@` : ''}127.0.0.1:${port}`,
    stop: async () => {
      child.kill('SIGTERM');
      await exited(child);
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

export interface TestWorker {
  child: ChildProcess;
  /** Everything it wrote so far. */
  output(): string;
  stop(): Promise<void>;
}

/** An `earwitness worker` for one shard file, once it says it is serving. */
export async function startWorker(url: string, shard: string, extra: string[] = []): Promise<TestWorker> {
  const child = spawn(process.execPath, [CLI, 'worker', '--queue', url, '--corpus', shard, ...extra], { stdio: ['ignore', 'pipe', 'pipe'] });
  let seen = '';
  child.stdout!.on('data', (c: Buffer) => (seen += c));
  child.stderr!.on('data', (c: Buffer) => (seen += c));
  await waitForOutput(child, /serving shard/, 20_000);
  return {
    child,
    output: () => seen,
    stop: async () => {
      child.kill('SIGKILL');
      await exited(child);
    },
  };
}
