/**
 * What Linux says about a process (proc(5)): resident memory and open file
 * descriptors, for the load and soak tests; OSC sending paced by the clock.
 *
 * @example
 *   rssMb(child.pid!)    // → 83.4 (VmRSS of /proc/PID/status)
 *   fdCount(child.pid!)  // → 31 (entries of /proc/PID/fd)
 *   udpDrops(9750)       // → 0 (datagrams the kernel dropped for the socket on 127.0.0.1:9750, its buffer full)
 *   await paced(20_000, 10_000, (k) => send(noteBytes(k)))   // 20,000 sends spread over 10 s
 */
import { readFileSync, readdirSync } from 'node:fs';
import { createSocket } from 'node:dgram';
import osc from 'osc';

/** VmRSS in MB: resident memory, the worker thread's included. */
export function rssMb(pid: number): number {
  const m = /^VmRSS:\s+(\d+) kB$/m.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
  if (!m) throw new Error(`/proc/${pid}/status has no VmRSS line`);
  return Number(m[1]) / 1024;
}

export const fdCount = (pid: number): number => readdirSync(`/proc/${pid}/fd`).length;

/**
 * Datagrams the kernel dropped for the UDP socket bound to 127.0.0.1:`port`
 * because its receive buffer was full: the last column of /proc/net/udp.
 */
export function udpDrops(port: number): number {
  const local = `0100007F:${port.toString(16).toUpperCase().padStart(4, '0')}`;
  const row = readFileSync('/proc/net/udp', 'utf8').split('\n').map((l) => l.trim().split(/\s+/)).find((f) => f[1] === local);
  if (!row) throw new Error(`/proc/net/udp has no socket on ${local}`);
  return Number(row.at(-1));
}

export interface OscSender {
  send(bytes: Uint8Array): Promise<void>;
  close(): void;
}

export function oscSender(port: number): OscSender {
  const socket = createSocket('udp4');
  return {
    send: (bytes) => new Promise((resolve, reject) => socket.send(bytes, port, '127.0.0.1', (e) => (e ? reject(e) : resolve()))),
    close: () => socket.close(),
  };
}

/** `/ew/note pitch velocity duration [beat]`, OSC 1.0 bytes. */
export const noteBytes = (pitch: number, duration: number, beat?: number): Uint8Array =>
  osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: pitch }, { type: 'i', value: 90 }, { type: 'f', value: duration }, ...(beat === undefined ? [] : [{ type: 'f', value: beat }])] }, { metadata: true });

/**
 * Calls `send(k)` for k = 0…n−1, spread evenly over `ms`, in slices of 10 ms
 * (sent back to back within a slice): a sustained rate, not one burst the
 * kernel's UDP buffer would overflow on. Resolves when all are sent.
 */
export async function paced(n: number, ms: number, send: (k: number) => Promise<void>): Promise<void> {
  const slices = Math.max(1, Math.round(ms / 10));
  const t0 = Date.now();
  let k = 0;
  for (let s = 1; s <= slices; s++) {
    const until = Math.round((n * s) / slices);
    for (; k < until; k++) await send(k);
    const wait = t0 + s * 10 - Date.now();
    if (wait > 0) await new Promise((r) => setTimeout(r, wait));
  }
}
