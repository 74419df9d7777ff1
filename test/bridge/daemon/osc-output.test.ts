/**
 * OSC out (`--osc-out HOST:PORT`), read by an outside implementation:
 * Debian's liblo-tools `oscdump`, which prints each message it receives
 * with its type tags. The daemon must send `/ew/score f:score` after every
 * evaluation and `/ew/warning s:piece f:score i:transposition` on a warning.
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { createSocket } from 'node:dgram';
import osc from 'osc';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tool } from '../../helpers/which.js';
import { type SpawnedDaemon, type TestCorpus, eventually, passage, spawnDaemon, writeCorpus } from '../../helpers/daemon.js';

const oscdump = tool('oscdump', 'liblo-tools');

/** A UDP port free a moment ago, for oscdump to take. */
const freePort = (): Promise<number> =>
  new Promise((resolve) => {
    const s = createSocket('udp4');
    s.bind(0, '127.0.0.1', () => {
      const { port } = s.address();
      s.close(() => resolve(port));
    });
  });

describe.skipIf(!oscdump.path)(`OSC out, as ${oscdump.label} reads it`, () => {
  let dump: ChildProcess;
  let dumped = '';
  let d: SpawnedDaemon;
  let corpus: TestCorpus;
  beforeAll(async () => {
    const port = await freePort();
    dump = spawn(oscdump.path!, ['-L', String(port)], { stdio: ['ignore', 'pipe', 'pipe'] });
    dump.stdout!.on('data', (b: Buffer) => (dumped += b.toString()));
    corpus = writeCorpus();
    d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode', '--osc-out', `127.0.0.1:${port}`]);
  });
  afterAll(async () => {
    dump?.kill();
    await d?.stop();
  });

  it('sends /ew/score f after each evaluation and /ew/warning s f i on a warning', async () => {
    const socket = createSocket('udp4');
    const played = passage(corpus.pieces['cinderpath.mid'], 4, 20, 40, -7);
    for (const n of played) {
      const bytes = osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: n.pitch }, { type: 'i', value: 90 }, { type: 'f', value: n.duration }, { type: 'f', value: n.onset }] }, { metadata: true });
      await new Promise<void>((resolve) => socket.send(bytes, d.osc, '127.0.0.1', () => resolve()));
      await new Promise((r) => setTimeout(r, 5));
    }
    socket.close();
    await eventually(async () => dumped, (s) => /\/ew\/warning/.test(s));
    const warning = /\/ew\/warning sfi "([^"]+)" ([\d.]+) (-?\d+)/.exec(dumped);
    expect(warning).not.toBeNull();
    expect(warning![1]).toBe('cinderpath.mid');
    expect(Number(warning![2])).toBeGreaterThanOrEqual(0.7);
    expect(Number(warning![3])).toBe(-7);
    const scores = [...dumped.matchAll(/\/ew\/score f ([\d.]+)/g)].map((m) => Number(m[1]));
    expect(scores.length).toBeGreaterThan(0);
    expect(scores.every((s) => s >= 0 && s <= 1)).toBe(true);
  });
});
