/**
 * Every command in the README works exactly as written. The command lines
 * of its ```sh blocks are run in order, as a new user would type them, in a
 * sandbox folder (the repository's dist/ linked in, a copy of presets/, its
 * own session log through XDG_DATA_HOME), so files they write land there:
 *
 * - `node dist/bridge/cli.js …`, `cp`, `mkdir`: run by sh; the exit code
 *   must be the one a trailing `# exit N` comment names (0 when none), with
 *   no stack trace, and the files they are told to write must exist.
 * - the daemon (`listen`, `demo`, and `npm start` / `npm run demo`, whose
 *   package.json scripts must be those commands): started with free ports
 *   appended (commander takes the last value), run until it listens — the
 *   demo until its first warning reaches /events, within 60 s — and
 *   stopped with SIGINT, exit 0, before the next command that is not an
 *   `oscsend` line.
 * - `oscsend localhost 9750 …` (Debian's liblo-tools; skipped by name when
 *   absent): sent to the running daemon's port; /health must count it and
 *   report no bad input.
 * - `curl … http://127.0.0.1:9751/report…` (skipped by name when curl is
 *   absent): sent to the running daemon's port; the answer must be a report
 *   document, and the first one's originality the figure the README quotes.
 * - `npm ci` and `npm test` are not run here: the first is the install this
 *   suite runs inside, the second is this suite.
 *
 * A command line of any other kind fails the test, so nothing in the README
 * goes untried.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, readFileSync, statSync, symlinkSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { Command } from 'commander';
import { program } from '../bridge/cli/program.js';
import { EXIT } from '../bridge/cli/usage.js';
import { tool } from './helpers/which.js';
import { CLI, ROOT, eventually, health, listen, tempDir } from './helpers/daemon.js';
import { type Launched, launch } from './helpers/launch.js';

const README = readFileSync(join(ROOT, 'README.md'), 'utf8');
const SCRIPTS = (JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { scripts: Record<string, string> }).scripts;
const RUN = 'node dist/bridge/cli.js';

/** The command lines of the ```sh blocks under each `## ` heading, in order. */
function shCommands(markdown: string): { section: string; line: string }[] {
  const out: { section: string; line: string }[] = [];
  let section = '';
  let inSh = false;
  for (const line of markdown.split('\n')) {
    if (!inSh && line.startsWith('## ')) section = line.slice(3).trim();
    else if (!inSh && line.trim() === '```sh') inSh = true;
    else if (inSh && line.trim() === '```') inSh = false;
    else if (inSh && line.trim() !== '' && !line.trim().startsWith('#')) out.push({ section, line: line.trim() });
  }
  return out;
}

type Kind = 'shell' | 'daemon' | 'demo' | 'osc' | 'http' | 'not-run';
function kindOf(line: string): Kind {
  if (line === 'npm ci && npm start' || line === 'npm run demo') return line === 'npm run demo' ? 'demo' : 'daemon';
  if (line === 'npm test') return 'not-run';
  if (line.startsWith('oscsend ')) return 'osc';
  if (line.startsWith('curl ')) return 'http';
  const m = new RegExp(`^${RUN} (listen|demo)( |$)`).exec(line);
  if (m && !line.includes('--help')) return m[1] === 'demo' ? 'demo' : 'daemon';
  if (line.startsWith(`${RUN} `) || /^(cp|mkdir) /.test(line)) return 'shell';
  throw new Error(`README command of no known kind (teach test/readme.test.ts to try it): ${line}`);
}

/** The command a line starts the daemon with: npm scripts stand for what package.json says. */
function daemonCommand(line: string): string {
  if (line === 'npm ci && npm start') return SCRIPTS.start;
  if (line === 'npm run demo') return SCRIPTS.demo;
  return line;
}

const commands = shCommands(README);
const sandbox = tempDir('readme');
symlinkSync(join(ROOT, 'dist'), join(sandbox, 'dist'));
cpSync(join(ROOT, 'presets'), join(sandbox, 'presets'), { recursive: true });
const env = { ...process.env, XDG_DATA_HOME: join(sandbox, 'xdg') };
const oscsend = tool('oscsend', 'liblo-tools');
const curl = tool('curl', 'curl');

let running: (Launched & { line: string }) | null = null;

async function startDaemon(line: string): Promise<Launched & { line: string }> {
  // exec: the signal goes to node itself, not to a shell waiting on it.
  return { line, ...(await launch('sh', ['-c', `exec ${daemonCommand(line)} --osc-port 0 --http-port 0`], { cwd: sandbox, env })) };
}

/** Stops the running daemon as Ctrl-C would. */
async function stopDaemon(): Promise<void> {
  if (!running) return;
  const r = running;
  running = null;
  const { code, signal } = await r.stop('SIGINT');
  expect({ code, signal }, `"${r.line}" on SIGINT; stderr: ${r.stderr()}`).toEqual({ code: 0, signal: null });
}

afterAll(async () => {
  if (running) running.child.kill('SIGKILL');
});

/** Files a command line is told to write: `> FILE`, `--html`, `--midi`, `--csv`, `--pairs`. */
const writes = (line: string): string[] =>
  [...line.matchAll(/(?:>|--html|--midi|--csv|--pairs)\s+([^\s#]+)/g)].map((m) => m[1]);

describe('the README', () => {
  it('gives exactly two set-up commands: the main job on the demo corpus, and the tests', () => {
    expect(commands.filter((c) => c.section === 'Set up').map((c) => c.line)).toEqual(['npm ci && npm start', 'npm test']);
    expect(SCRIPTS.start).toBe(`${RUN} listen --corpus presets/demo/corpus --preset jam`);
    expect(SCRIPTS.demo).toBe(`${RUN} demo`);
    expect(README).toContain("A similarity score is evidence for a musician's judgement, not a legal finding.");
  });

  it('uses one form of the command line throughout', () => {
    for (const { line } of commands) expect(line, 'commands are run as node dist/bridge/cli.js or an npm script').not.toMatch(/^(npx )?earwitness /);
  });

  for (const { section, line } of commands) {
    const kind = kindOf(line);
    const title = `[${section}] ${line}`;
    if (kind === 'not-run') {
      it.skip(`${title} (not run here: the install and this suite)`, () => {});
    } else if (kind === 'osc') {
      it.skipIf(!oscsend.path)(`${title}${oscsend.path ? '' : ` — ${oscsend.label}`}`, async () => {
        expect(running, 'an oscsend line follows a command that starts the daemon').not.toBeNull();
        const before = await health(running!.http);
        const sent = line.replace(/^oscsend localhost 9750 /, `oscsend localhost ${running!.osc} `);
        const r = spawnSync('sh', ['-c', sent], { cwd: sandbox, env, encoding: 'utf8' });
        expect(r.status, r.stderr).toBe(0);
        const address = line.split(/\s+/)[3];
        const expectations: Record<string, (h: Record<string, any>) => boolean> = {
          '/ew/note': (h) => h.notes === before.notes + 1,
          '/ew/on': (h) => h.notes === before.notes + 1 && h.held === before.held + 1,
          '/ew/off': (h) => h.held === before.held - 1,
          '/ew/tempo': (h) => h.clock.bpm === Number(line.split(/\s+/)[5]),
          '/ew/beat': (h) => h.clock.beat < 1,
          '/ew/reset': () => true,
          '/ew/meter': (h) => h.meter === `${line.split(/\s+/)[5]}/${line.split(/\s+/)[6]}`,
        };
        expect(Object.keys(expectations)).toContain(address);
        const after = await eventually(() => health(running!.http), expectations[address]);
        expect(expectations[address](after), JSON.stringify(after)).toBe(true);
        expect(after.badInput).toEqual({});
      });
    } else if (kind === 'http') {
      it.skipIf(!curl.path)(`${title}${curl.path ? '' : ` — ${curl.label}`}`, () => {
        expect(running, 'a curl line follows a command that starts the daemon').not.toBeNull();
        const sent = line.replaceAll('127.0.0.1:9751', `127.0.0.1:${running!.http}`);
        const r = spawnSync('sh', ['-c', sent], { cwd: sandbox, env, encoding: 'utf8', timeout: 60_000 });
        expect(r.status, r.stderr).toBe(0);
        const answer = JSON.parse(r.stdout) as Record<string, unknown>;
        expect(Object.keys(answer), r.stdout).toEqual(expect.arrayContaining(['originality', 'queries', 'settings', 'caution', 'mode', 'skipped']));
        if (commands.find((c) => kindOf(c.line) === 'http')!.line === line) {
          const quoted = /The first answers `\{"originality": ([\d.]+)…/.exec(README);
          expect(quoted, 'the README quotes the first answer').not.toBeNull();
          expect(String(answer.originality).startsWith(quoted![1]), String(answer.originality)).toBe(true);
        }
      });
    } else if (kind === 'daemon' || kind === 'demo') {
      it(title, async () => {
        await stopDaemon();
        running = await startDaemon(line);
        const h = await health(running.http);
        expect(h.ok).toBe(true);
        expect(running.stdout()).toMatch(/http:\/\/127\.0\.0\.1:\d+\//);
        if (kind === 'demo') {
          const events = await listen(running.http);
          const warning = await events.next((e) => e.type === 'warning', 60_000);
          events.close();
          expect(warning.type).toBe('warning');
          await stopDaemon();
        }
      }, 90_000);
    } else {
      it(title, async () => {
        await stopDaemon();
        const expected = Number(/#\s*exit (\d)/.exec(line)?.[1] ?? EXIT.ok);
        const r = spawnSync('sh', ['-c', line], { cwd: sandbox, env, encoding: 'utf8', timeout: 60_000 });
        expect(r.stderr, 'no stack trace').not.toContain('    at ');
        expect(r.status, `stdout: ${r.stdout}\nstderr: ${r.stderr}`).toBe(expected);
        for (const file of writes(line)) {
          expect(existsSync(join(sandbox, file)), `${file} written`).toBe(true);
          const stat = statSync(join(sandbox, file));
          expect(stat.isDirectory() || stat.size > 0, `${file} is not empty`).toBe(true);
        }
      });
    }
  }

  it('quotes the gate as it prints', () => {
    const quoted = /The first prints `([^`]*?) …`/.exec(README);
    expect(quoted, 'the README quotes the first check line').not.toBeNull();
    const first = commands.find((c) => c.line.startsWith(`${RUN} check `))!.line.replace(/#.*$/, '');
    const r = spawnSync('sh', ['-c', first], { cwd: sandbox, env, encoding: 'utf8' });
    expect(r.stdout.startsWith(quoted![1]), r.stdout).toBe(true);
    const fresh = spawnSync(process.execPath, [CLI, 'check', 'presets/demo/queries/fresh.mid', '--corpus', 'presets/demo/corpus', '--against-baseline'], { cwd: sandbox, env, encoding: 'utf8' });
    const [, interval, originality] = /narrow \(([^)]*)\), and even the all-new `fresh\.mid` \(([^)]*)\)/.exec(README)!;
    expect(fresh.stdout).toContain(`FAIL: originality ${originality} `);
    expect(fresh.stdout).toContain(`(${interval}, `);
  });
});

describe('--help of every command', () => {
  const names = (c: Command, prefix: string[] = []): string[][] =>
    c.commands.flatMap((sub) => [[...prefix, sub.name()], ...names(sub, [...prefix, sub.name()])]);
  it.each(names(program()).map((n) => [n.join(' ')]))('%s --help', (name) => {
    const r = spawnSync(process.execPath, [CLI, ...name.split(' '), '--help'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(EXIT.ok);
    expect(r.stdout).toMatch(new RegExp(`^Usage: earwitness ${name} `));
  });
});

