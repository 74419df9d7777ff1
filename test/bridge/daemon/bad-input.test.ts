/**
 * Bad OSC input — malformed packets, unknown addresses, wrong argument
 * types and counts, pitches outside 0–127, absurd beats and tempi, bundles
 * timed absurdly far ahead, oversized packets — is counted by kind in
 * /health, shown once per kind on stderr, and otherwise ignored: the
 * daemon keeps running and keeps hearing good input. Bundles' time tags
 * are honoured (OSC 1.0: 0x0000000000000001 means "immediately").
 */
import { createSocket } from 'node:dgram';
import osc from 'osc';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ScoreEvent } from '../../../contract/events.js';
import { type SpawnedDaemon, eventually, health, listen, spawnDaemon, writeCorpus } from '../../helpers/daemon.js';

const socket = createSocket('udp4');
const message = (address: string, args: { type: string; value: unknown }[]) => osc.writePacket({ address, args }, { metadata: true });
const i = (value: number) => ({ type: 'i', value });
const f = (value: number) => ({ type: 'f', value });

describe('bad OSC input', () => {
  let d: SpawnedDaemon;
  const send = (bytes: Uint8Array): Promise<void> => new Promise((resolve) => socket.send(bytes, d.osc, '127.0.0.1', () => resolve()));
  beforeAll(async () => {
    d = await spawnDaemon(['--corpus', writeCorpus().dir, '--preset', 'livecode']);
  });
  afterAll(async () => {
    socket.close();
    await d?.stop();
  });

  const bad: Record<string, Uint8Array> = {
    malformed: new Uint8Array(Buffer.from('not an OSC packet')),
    oversized: new Uint8Array(9000).fill(0x2f),
    address: message('/ew/bogus', [i(1)]),
    type: message('/ew/note', [{ type: 's', value: 'C4' }, i(90), f(1)]),
    arguments: message('/ew/note', [i(60)]),
    pitch: message('/ew/note', [i(200), i(90), f(1)]),
    velocity: message('/ew/note', [i(60), i(300), f(1)]),
    beat: message('/ew/note', [i(60), i(90), f(1), f(1e9)]),
    tempo: message('/ew/tempo', [f(0)]),
    timetag: osc.writePacket({ timeTag: osc.timeTag(3600), packets: [{ address: '/ew/reset', args: [] }] }, { metadata: true }),
  };

  it('counts each kind in /health, says so once per kind on stderr, and keeps running', async () => {
    for (let round = 0; round < 3; round++) for (const bytes of Object.values(bad)) await send(bytes);
    await send(message('/ew/note', [i(60), i(90), f(1), f(Number.NaN)]));
    const h = await eventually(() => health(d.http), (v) => Object.values(v.badInput as Record<string, number>).reduce((s, n) => s + n, 0) === 31);
    expect(h.badInput).toEqual({ ...Object.fromEntries(Object.keys(bad).map((k) => [k, 3])), beat: 4 });
    expect(h.notes).toBe(0);
    for (const kind of Object.keys(bad)) {
      expect(d.stderr().split('\n').filter((l) => l.includes(`input (${kind}):`)).length, kind).toBe(1);
    }
    expect(d.stderr()).toMatch(/ignored bad OSC input \(pitch\): \/ew\/note: pitch 200 is outside 0–127/);
    expect(d.child.exitCode).toBeNull();
  });

  it('still hears good input afterwards', async () => {
    const events = await listen(d.http);
    await send(message('/ew/note', [i(60), i(90), f(1), f(4)]));
    const score = await events.next<ScoreEvent>((e) => e.type === 'score');
    expect(score.seq).toBe(1);
    expect(score.windowNotes).toBe(1);
    events.close();
  });

  it('plays an "immediately" bundle now and holds a future one until its time tag', async () => {
    const before = (await health(d.http)).notes as number;
    await send(osc.writePacket({ timeTag: { raw: [0, 1] }, packets: [{ address: '/ew/note', args: [i(62), i(90), f(1)] }] } as never, { metadata: true }));
    await eventually(() => health(d.http), (v) => v.notes === before + 1);
    await send(osc.writePacket({ timeTag: osc.timeTag(1.5), packets: [{ address: '/ew/note', args: [i(64), i(90), f(1)] }, { address: '/ew/note', args: [i(65), i(90), f(1)] }] }, { metadata: true }));
    const waiting = await eventually(() => health(d.http), (v) => v.scheduled === 2);
    expect(waiting.notes).toBe(before + 1);
    const played = await eventually(() => health(d.http), (v) => v.notes === before + 3);
    expect(played.notes).toBe(before + 3);
    expect(played.scheduled).toBe(0);
  });
});
