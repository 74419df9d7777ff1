/**
 * OSC in: a UDP socket on 127.0.0.1, packets decoded with the `osc`
 * package's OSC 1.0 codec, messages checked by osc-messages.ts.
 *
 * Bundles are honoured: a time tag in the future schedules its messages for
 * then (a note without a beat is placed at the tag's time, not the time the
 * timer fired); "immediately" (0x0000000000000001) and past tags mean now.
 * Anything unusable — an oversized or undecodable packet, a tag absurdly far
 * ahead, too much scheduled at once, a bad message — goes to `onBad` and is
 * otherwise ignored: the socket never closes over what a client sent.
 *
 * @example
 *   const input = await openOscInput({ port: 9750, onCommand: (cmd, atMs) => daemon.handle(cmd, atMs), onBad: count });
 *   input.port    // → 9750 (the port bound, when 0 was asked for)
 *   await input.close();
 *
 *   const reader = oscReader({ onCommand, onBad });   // the same, without a socket (tests)
 *   reader.read(packetBytes, '127.0.0.1:50000');
 */
import { createSocket } from 'node:dgram';
import osc, { type OscBundle, type OscMessage } from 'osc';
import type { BadInput, InputCommand } from './input.js';
import { decodeMessage } from './osc-messages.js';
import { UsageError } from '../formats/user-error.js';

/** Largest packet read; the daemon's messages are a few dozen bytes. */
export const MAX_OSC_PACKET = 8192;
/** Furthest ahead a bundle may be scheduled. */
export const MAX_AHEAD_MS = 60_000;
/** Most messages waiting for their time tags at once. */
export const MAX_SCHEDULED = 4096;
/** Deepest nesting of bundles read. */
const MAX_DEPTH = 8;
/**
 * Receive buffer asked of the kernel (it grants up to net.core.rmem_max):
 * far larger than the default, so a busy moment of the main thread delays
 * a flood of notes instead of losing some (test/bridge/daemon/load.test.ts;
 * figures in test/bench/RESULTS.md).
 */
export const RECV_BUFFER_BYTES = 4 * 1024 * 1024;

export interface OscReaderOptions {
  onCommand(command: InputCommand, atMs: number): void;
  onBad(bad: BadInput): void;
  now?: () => number;
}

export interface OscInputOptions extends OscReaderOptions {
  port: number;
}

/** What the socket does with each packet, apart from the socket. */
export interface OscReader {
  /** One UDP payload; `from` names the sender in messages. */
  read(data: Uint8Array, from: string): void;
  /** Messages waiting for their time tags. */
  scheduled(): number;
  /** Drops whatever is waiting. */
  clear(): void;
}

export interface OscInput {
  port: number;
  /** Messages waiting for their time tags. */
  scheduled(): number;
  close(): Promise<void>;
}

const isBundle = (p: OscMessage | OscBundle): p is OscBundle => 'packets' in p;

export function oscReader(options: OscReaderOptions): OscReader {
  const now = options.now ?? Date.now;
  const timers = new Set<NodeJS.Timeout>();

  const deliver = (message: OscMessage, atMs: number): void => {
    const decoded = decodeMessage(message.address, message.args);
    if ('bad' in decoded) return options.onBad(decoded.bad);
    const wait = atMs - now();
    if (wait <= 0) return options.onCommand(decoded, now());
    if (timers.size >= MAX_SCHEDULED) return options.onBad({ kind: 'overload', detail: `more than ${MAX_SCHEDULED} bundled messages are waiting for their time tags; this one was dropped` });
    const timer = setTimeout(() => {
      timers.delete(timer);
      options.onCommand(decoded, atMs);
    }, wait);
    timers.add(timer);
  };

  const walk = (packet: OscMessage | OscBundle, atMs: number, depth: number): void => {
    if (!isBundle(packet)) return deliver(packet, atMs);
    if (depth >= MAX_DEPTH) return options.onBad({ kind: 'malformed', detail: `bundles nested more than ${MAX_DEPTH} deep` });
    const tag = packet.timeTag;
    const immediate = 'raw' in tag && tag.raw[0] === 0 && tag.raw[1] === 1;
    // OSC 1.0: a contained bundle's time tag is no earlier than its container's.
    const at = immediate ? atMs : Math.max(atMs, tag.native);
    if (!Number.isFinite(at) || at - now() > MAX_AHEAD_MS) {
      return options.onBad({ kind: 'timetag', detail: `a bundle time tag ${Math.round((at - now()) / 1000)} s ahead; at most ${MAX_AHEAD_MS / 1000} s ahead is scheduled` });
    }
    for (const p of packet.packets) walk(p, at, depth + 1);
  };

  return {
    read(data, from) {
      if (data.length > MAX_OSC_PACKET) return options.onBad({ kind: 'oversized', detail: `a ${data.length}-byte packet from ${from}; at most ${MAX_OSC_PACKET} bytes are read` });
      let packet: OscMessage | OscBundle;
      try {
        packet = osc.readPacket(data, { metadata: true, unpackSingleArgs: false });
      } catch (e) {
        return options.onBad({ kind: 'malformed', detail: `an undecodable packet from ${from} (${(e as Error).message.slice(0, 120)})` });
      }
      walk(packet, now(), 0);
    },
    scheduled: () => timers.size,
    clear() {
      for (const t of timers) clearTimeout(t);
      timers.clear();
    },
  };
}

export async function openOscInput(options: OscInputOptions): Promise<OscInput> {
  const reader = oscReader(options);
  const socket = createSocket({ type: 'udp4', recvBufferSize: RECV_BUFFER_BYTES });
  socket.on('message', (data, from) => reader.read(data, `${from.address}:${from.port}`));

  await new Promise<void>((resolve, reject) => {
    socket.once('error', (e: NodeJS.ErrnoException) =>
      reject(new UsageError(`--osc-port ${options.port}: cannot listen on 127.0.0.1 (${e.code === 'EADDRINUSE' ? 'the port is in use; choose another, or 0 for any free one' : e.message})`)),
    );
    socket.bind(options.port, '127.0.0.1', () => resolve());
  });
  // Once bound, a socket error (a burst of ICMP, say) is reported and the socket carries on.
  socket.on('error', (e) => options.onBad({ kind: 'socket', detail: e.message }));

  return {
    port: socket.address().port,
    scheduled: reader.scheduled,
    close: () =>
      new Promise<void>((resolve) => {
        reader.clear();
        socket.close(() => resolve());
      }),
  };
}
