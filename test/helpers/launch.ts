/**
 * For the demo's and the README's tests: starts a process that runs the
 * daemon (`demo`, `listen`, an npm script's command line through sh) and
 * resolves once it prints its `listening osc=PORT http=PORT` line, with
 * the same handle the daemon tests use (test/helpers/daemon.ts).
 *
 * @example
 *   const d = await launch(process.execPath, [CLI, 'demo', '--http-port', '0', '--osc-port', '0'], { cwd: ROOT, env: process.env });
 *   await d.stop('SIGINT');   // → { code: 0, signal: null, ms: 240 }
 */
import { spawn } from 'node:child_process';
import { type SpawnedDaemon, eventually } from './daemon.js';

export type Launched = Omit<SpawnedDaemon, 'log'>;

export async function launch(file: string, args: string[], options: { cwd: string; env: NodeJS.ProcessEnv; startMs?: number }): Promise<Launched> {
  const child = spawn(file, args, { cwd: options.cwd, env: options.env, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  child.stdout!.on('data', (d: Buffer) => (out += d.toString()));
  child.stderr!.on('data', (d: Buffer) => (err += d.toString()));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.on('exit', (code, signal) => resolve({ code, signal })));
  const ended = (): boolean => child.exitCode !== null || child.signalCode !== null;
  const ports = await eventually(async () => /listening osc=(\d+) http=(\d+)/.exec(out), (m) => m !== null || ended(), options.startMs ?? 20_000);
  if (!ports) {
    child.kill('SIGKILL');
    throw new Error(`${[file, ...args].join(' ')} ${ended() ? `exited with ${child.exitCode ?? child.signalCode}` : 'did not start'} before listening; stdout: ${out}; stderr: ${err}`);
  }
  return {
    child,
    osc: Number(ports[1]),
    http: Number(ports[2]),
    stdout: () => out,
    stderr: () => err,
    exited,
    async stop(signal = 'SIGINT') {
      const t0 = Date.now();
      if (!ended()) child.kill(signal);
      return { ...(await exited), ms: Date.now() - t0 };
    },
  };
}
