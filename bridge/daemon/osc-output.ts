/**
 * OSC out (`--osc-out HOST:PORT`), so a live-coding editor can show what
 * the daemon sees: `/ew/warning s:piece f:score i:transposition` when a
 * warning is raised, `/ew/score f:score` after every evaluation. UDP: a
 * listener that is not there loses nothing but these messages.
 *
 * @example
 *   const out = await openOscOutput(parseOscTarget('127.0.0.1:9752'));
 *   out.warning('reels/the-ninth-buoy.mid', 0.92, 5);
 *   out.score(0.31);
 */
import { createSocket } from 'node:dgram';
import osc from 'osc';
import { UsageError } from '../formats/user-error.js';

export interface OscTarget {
  host: string;
  port: number;
}

export function parseOscTarget(text: string): OscTarget {
  const m = /^([^:\s]+):(\d{1,5})$/.exec(text);
  const port = m ? Number(m[2]) : NaN;
  if (!m || port < 1 || port > 65535) throw new UsageError(`--osc-out ${text}: expected HOST:PORT with a port from 1 to 65535, as in 127.0.0.1:9752`);
  return { host: m[1], port };
}

export interface OscOutput {
  warning(piece: string, score: number, transposition: number): void;
  score(score: number): void;
  /** Messages the system would not send (a name that does not resolve, say). */
  failures(): number;
  close(): Promise<void>;
}

export async function openOscOutput(target: OscTarget): Promise<OscOutput> {
  const socket = createSocket('udp4');
  let failed = 0;
  socket.on('error', () => failed++);
  await new Promise<void>((resolve) => socket.bind(0, resolve));
  const send = (address: string, args: { type: string; value: unknown }[]): void => {
    const bytes = osc.writePacket({ address, args }, { metadata: true });
    socket.send(bytes, target.port, target.host, (e) => {
      if (e) failed++;
    });
  };
  return {
    warning: (piece, score, transposition) =>
      send('/ew/warning', [{ type: 's', value: piece }, { type: 'f', value: score }, { type: 'i', value: transposition }]),
    score: (score) => send('/ew/score', [{ type: 'f', value: score }]),
    failures: () => failed,
    close: () => new Promise<void>((resolve) => socket.close(() => resolve())),
  };
}
