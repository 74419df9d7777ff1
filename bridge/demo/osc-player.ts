/**
 * Plays an endless melody to an OSC listener in real time, as a
 * live-coding environment would: `/ew/tempo` and `/ew/beat 0` first, so the
 * receiver's clock agrees, then one `/ew/note i:pitch i:velocity
 * f:durationBeats f:beat` per event at its moment, carrying its own beat.
 * Sending the beat keeps the music exact however late a timer fires on a
 * busy machine; a late note is only late on the screen.
 *
 * @example
 *   const player = await startOscPlayer({ host: '127.0.0.1', port: 9750, bpm: 120, next: () => gen.next() });
 *   // … later
 *   await player.stop();
 *   player.sent()   // → 143
 */
import { createSocket } from 'node:dgram';
import osc from 'osc';
import type { MelodyEvent } from '../../core/markov.js';

export interface OscPlayerOptions {
  host: string;
  port: number;
  /** Quarter notes a minute. */
  bpm: number;
  next: () => MelodyEvent;
  velocity?: number;
  channel?: number;
}

export interface OscPlayer {
  /** Notes sent so far. */
  sent(): number;
  stop(): Promise<void>;
}

const DEFAULT_VELOCITY = 90;

export async function startOscPlayer(o: OscPlayerOptions): Promise<OscPlayer> {
  const socket = createSocket('udp4');
  // UDP to a listener that is not (yet) there only loses the packet; the performance goes on.
  socket.on('error', () => {});
  await new Promise<void>((resolve) => socket.bind(0, '127.0.0.1', resolve));
  const send = (address: string, args: { type: string; value: number }[]): void =>
    socket.send(osc.writePacket({ address, args }, { metadata: true }), o.port, o.host);

  send('/ew/tempo', [{ type: 'f', value: o.bpm }]);
  send('/ew/beat', [{ type: 'f', value: 0 }]);
  const msPerBeat = 60_000 / o.bpm;
  const began = performance.now();
  let beat = 0;
  let sent = 0;
  let timer: NodeJS.Timeout | null = null;
  const play = (): void => {
    const e = o.next();
    send('/ew/note', [
      { type: 'i', value: e.pitch },
      { type: 'i', value: o.velocity ?? DEFAULT_VELOCITY },
      { type: 'f', value: e.duration },
      { type: 'f', value: beat },
      ...(o.channel === undefined ? [] : [{ type: 'i', value: o.channel }]),
    ]);
    sent++;
    beat += e.step;
    // Due times come from the start, not from the last timer, so lateness never accumulates.
    timer = setTimeout(play, Math.max(0, began + beat * msPerBeat - performance.now()));
  };
  play();
  return {
    sent: () => sent,
    stop: () => {
      if (timer) clearTimeout(timer);
      timer = null;
      return new Promise<void>((resolve) => socket.close(() => resolve()));
    },
  };
}
