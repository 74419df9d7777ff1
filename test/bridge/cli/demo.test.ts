/**
 * `earwitness demo` as a new user runs it (`node dist/bridge/cli.js demo`,
 * what `npm run demo` calls), on free ports with a temp log: it prints the
 * overlay URL, a real warning reaches /events within 60 s (the issue's
 * "within a minute"), the warning names a demo-corpus tune, and Ctrl-C
 * (SIGINT) stops the generator and the daemon with exit 0, the session
 * saved with its notes and warnings.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { WarningEvent } from '../../../contract/events.js';
import { EXIT } from '../../../bridge/cli/usage.js';
import { CLI, ROOT, health, listen, tempDir } from '../../helpers/daemon.js';
import { type Launched, launch } from '../../helpers/launch.js';

const TUNES = readdirSync(join(ROOT, 'presets', 'demo', 'corpus')).filter((f) => f.endsWith('.mid'));

describe('earwitness demo', () => {
  let d: Launched;
  let startedAt: number;
  const log = join(tempDir('demo-log'), 'sessions.db');

  beforeAll(async () => {
    if (!existsSync(CLI)) throw new Error(`${CLI} is missing: build first (npx tsc -p tsconfig.json)`);
    startedAt = Date.now();
    d = await launch(process.execPath, [CLI, 'demo', '--http-port', '0', '--osc-port', '0', '--log', log], { cwd: ROOT, env: process.env });
  });
  afterAll(() => {
    if (d && d.child.exitCode === null && d.child.signalCode === null) d.child.kill('SIGKILL');
  });

  it('prints the overlay URL on a line of its own, and the caution', () => {
    expect(d.stdout()).toMatch(new RegExp(`^ +Open the overlay in your browser: +http://127\\.0\\.0\\.1:${d.http}/$`, 'm'));
    expect(d.stdout()).toContain("A similarity score is evidence for a musician's judgement, not a legal finding.");
    expect(d.stdout()).toMatch(/preset: livecode/);
  });

  it('shows a real warning on /events within a minute, naming a demo tune', async () => {
    const events = await listen(d.http);
    const warning = await events.next<WarningEvent>((e) => e.type === 'warning', 60_000);
    const seconds = (Date.now() - startedAt) / 1000;
    process.stderr.write(`demo: first warning after ${seconds.toFixed(1)} s from start: ${warning.title}, score ${warning.score.toFixed(2)}\n`);
    events.close();
    expect(TUNES).toContain(warning.piece);
    expect(warning.score).toBeGreaterThanOrEqual(0.7);
    const h = await health(d.http);
    expect(h.notes).toBeGreaterThan(8);
    expect(h.badInput).toEqual({});
    expect(h.warnings).toBeGreaterThanOrEqual(1);
    // The terminal hears of it too.
    await new Promise((r) => setTimeout(r, 200));
    expect(d.stdout()).toContain(`warning: "${warning.title}" (${warning.piece})`);
  });

  it('stops the generator and the daemon on SIGINT with exit 0, the session saved', async () => {
    const r = await d.stop('SIGINT');
    expect({ code: r.code, signal: r.signal }, d.stderr()).toEqual({ code: 0, signal: null });
    const sessions = spawnSync(process.execPath, [CLI, 'sessions', '--log', log, '--json'], { encoding: 'utf8' });
    expect(sessions.status, sessions.stderr).toBe(EXIT.ok);
    const [s] = JSON.parse(sessions.stdout) as { preset: string; end: string | null; notes: number; warnings: number }[];
    expect(s.preset).toBe('livecode');
    expect(s.end).not.toBeNull();
    expect(s.notes).toBeGreaterThan(8);
    expect(s.warnings).toBeGreaterThanOrEqual(1);
  });
});

describe('earwitness demo, bad flags', () => {
  const demo = (...args: string[]) => spawnSync(process.execPath, [CLI, 'demo', ...args], { encoding: 'utf8', timeout: 20_000 });
  it.each([
    [['--order', '65'], /--order must be a whole number from 0 to 64, got "65"/],
    [['--order', '2.5'], /--order must be a whole number from 0 to 64/],
    [['--seed', '-1'], /--seed must be a whole number, got "-1"/],
    [['--osc-port', '70000'], /--osc-port must be a port number from 0 \(any free port\) to 65535, got "70000"/],
  ])('%j is refused with exit 2, naming the flag', (args, message) => {
    const r = demo(...args);
    expect(r.status).toBe(EXIT.usage);
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toContain('    at ');
  });
});
