/**
 * The demo generator's OSC side: what it sends, decoded by the `osc`
 * package and by a separate OSC 1.0 implementation, Debian's liblo-tools
 * `oscdump` (skipped by name when it is absent), and that it plays in real
 * time rather than all at once.
 */
import { spawn } from 'node:child_process';
import { createSocket } from 'node:dgram';
import osc from 'osc';
import { afterEach, describe, expect, it } from 'vitest';
import type { MelodyEvent } from '../../../core/markov.js';
import { type OscPlayer, startOscPlayer } from '../../../bridge/demo/osc-player.js';
import { tool } from '../../helpers/which.js';

const EVENTS: MelodyEvent[] = [
  { pitch: 62, duration: 0.5, step: 0.5 },
  { pitch: 66, duration: 1, step: 1.5 },
  { pitch: 69, duration: 0.25, step: 0.25 },
  { pitch: 74, duration: 2, step: 2 },
];
const cycle = (): (() => MelodyEvent) => {
  let i = 0;
  return () => EVENTS[i++ % EVENTS.length];
};
/** Beats the first notes start at: the running sum of the steps before each. */
const BEATS = [0, 0.5, 2, 2.25, 4.25, 4.75];

let player: OscPlayer | null = null;
afterEach(async () => {
  await player?.stop();
  player = null;
});

async function freeUdpPort(): Promise<number> {
  const s = createSocket('udp4');
  await new Promise<void>((r) => s.bind(0, '127.0.0.1', r));
  const port = s.address().port;
  await new Promise<void>((r) => s.close(() => r()));
  return port;
}

describe('the demo OSC player', () => {
  it('sets the tempo and beat 0, then sends each note with its own beat, at the tempo', async () => {
    const socket = createSocket('udp4');
    await new Promise<void>((r) => socket.bind(0, '127.0.0.1', r));
    const got: { address: string; args: { type: string; value: unknown }[]; at: number }[] = [];
    const enough = new Promise<void>((resolve) =>
      socket.on('message', (data) => {
        const m = osc.readPacket(data, { metadata: true }) as { address: string; args: { type: string; value: unknown }[] };
        got.push({ ...m, at: performance.now() });
        if (got.length === 2 + BEATS.length) resolve();
      }),
    );
    const began = performance.now();
    player = await startOscPlayer({ host: '127.0.0.1', port: socket.address().port, bpm: 600, next: cycle() });
    await enough;
    socket.close();
    expect(got[0]).toMatchObject({ address: '/ew/tempo', args: [{ type: 'f', value: 600 }] });
    expect(got[1]).toMatchObject({ address: '/ew/beat', args: [{ type: 'f', value: 0 }] });
    const notes = got.slice(2);
    expect(notes.map((n) => n.address)).toEqual(BEATS.map(() => '/ew/note'));
    expect(notes.map((n) => n.args.map((a) => a.type).join(''))).toEqual(BEATS.map(() => 'iiff'));
    expect(notes.map((n) => n.args[0].value)).toEqual([62, 66, 69, 74, 62, 66]);
    expect(notes.map((n) => n.args[2].value)).toEqual([0.5, 1, 0.25, 2, 0.5, 1]);
    expect(notes.map((n) => n.args[3].value)).toEqual(BEATS);
    // At 600 bpm a beat is 100 ms: the note at beat 4.75 cannot have gone before 475 ms (a lower bound only).
    expect(notes[5].at - began).toBeGreaterThanOrEqual(450);
    expect(player.sent()).toBeGreaterThanOrEqual(6);
  });

  const oscdump = tool('oscdump', 'liblo-tools');
  it.skipIf(!oscdump.path)(`is read as the same messages by ${oscdump.label}`, async () => {
    const port = await freeUdpPort();
    const dump = spawn(oscdump.path!, ['-L', String(port)], { stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    dump.stdout.on('data', (d: Buffer) => (out += d.toString()));
    try {
      await new Promise((r) => setTimeout(r, 300)); // oscdump binds its port
      player = await startOscPlayer({ host: '127.0.0.1', port, bpm: 600, next: cycle(), channel: 3 });
      const until = Date.now() + 10_000;
      while (out.split('\n').filter((l) => l.includes('/ew/note')).length < 3 && Date.now() < until) await new Promise((r) => setTimeout(r, 50));
    } finally {
      dump.kill('SIGTERM');
    }
    // oscdump prints "<time tag> <address> <types> <values…>", floats with six decimals.
    const lines = out.split('\n').map((l) => l.trim().split(/\s+/).slice(1).join(' '));
    expect(lines[0]).toBe('/ew/tempo f 600.000000');
    expect(lines[1]).toBe('/ew/beat f 0.000000');
    expect(lines.slice(2, 5)).toEqual(['/ew/note iiffi 62 90 0.500000 0.000000 3', '/ew/note iiffi 66 90 1.000000 0.500000 3', '/ew/note iiffi 69 90 0.250000 2.000000 3']);
  });
});
