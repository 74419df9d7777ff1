/**
 * The floor under the live benchmark (test/bench/live.ts): a note's trip
 * through this machine with no scoring at all. A child process receives each
 * OSC packet on loopback UDP and answers at once with one WebSocket frame of
 * the score event's size; the parent times packet out → frame in, exactly as
 * the live benchmark times the daemon. What the daemon adds is its latency
 * minus this.
 *
 * With `{ through: 'worker' }` the packet also makes the daemon's two hops
 * to its scoring thread and back: the child's main thread posts each packet
 * to a worker thread, which posts it straight back, and only then is the
 * frame sent. That is the floor of the daemon's own shape (input and
 * sockets on the main thread, scoring on a worker) with no scoring in it.
 * With `busyMs` as well, the worker keeps its CPU busy that long before it
 * answers, as scoring would: the daemon's shape with a scorer of a fixed
 * cost and nothing else.
 *
 * @example
 *   const floor = await echoFloor({ samples: 300, frameBytes: 4000 });
 *   floor   // → { p50Ms: 0.11, p99Ms: 0.4, maxMs: 2.9 }
 *   await echoFloor({ samples: 2000, frameBytes: 4000, through: 'worker' })              // → a Floor, as above
 *   await echoFloor({ samples: 2000, frameBytes: 4000, through: 'worker', busyMs: 0.9 })  // → a Floor
 */
import { fork } from 'node:child_process';
import { createSocket } from 'node:dgram';
import { fileURLToPath } from 'node:url';
import { performance } from 'node:perf_hooks';
import { Worker, isMainThread, parentPort, workerData } from 'node:worker_threads';
import { WebSocket, WebSocketServer } from 'ws';
import { percentile } from '../../core/stats.js';
import { idleCollector } from '../../bridge/daemon/idle-collect.js';

export interface Floor {
  p50Ms: number;
  p99Ms: number;
  maxMs: number;
}

/** What the trip goes through between packet and frame: nothing, or a worker thread and back. */
export type Through = 'nothing' | 'worker';

/** The echoing side: a UDP socket and a WebSocket server on 127.0.0.1, a frame of `frameBytes` per packet. */
function serve(frameBytes: number, through: Through, busyMs: number): void {
  const wss = new WebSocketServer({ port: 0, host: '127.0.0.1' });
  const udp = createSocket('udp4');
  const answer = (seq: number): void => {
    const frame = JSON.stringify({ type: 'score', seq, pad: 'x'.repeat(Math.max(0, frameBytes - 40)) });
    for (const c of wss.clients) c.send(frame);
  };
  if (through === 'worker') {
    const worker = new Worker(fileURLToPath(import.meta.url), { workerData: { busyMs } });
    worker.on('message', (m: { seq: number }) => answer(m.seq));
    udp.on('message', (m) => worker.postMessage({ seq: m.length }));
  } else udp.on('message', (m) => answer(m.length));
  wss.on('listening', () =>
    udp.bind(0, '127.0.0.1', () => process.send!({ ws: (wss.address() as { port: number }).port, udp: udp.address().port })),
  );
}

export async function echoFloor(options: { samples: number; frameBytes: number; packet?: Buffer; through?: Through; busyMs?: number }): Promise<Floor> {
  const child = fork(fileURLToPath(import.meta.url), ['serve', String(options.frameBytes), options.through ?? 'nothing', String(options.busyMs ?? 0)]);
  try {
    const ports = await new Promise<{ ws: number; udp: number }>((resolve) => child.once('message', resolve as (m: unknown) => void));
    const ws = new WebSocket(`ws://127.0.0.1:${ports.ws}`);
    await new Promise((resolve) => ws.once('open', resolve));
    const udp = createSocket('udp4');
    const collect = idleCollector();
    const packet = options.packet ?? Buffer.alloc(48);
    const ms: number[] = [];
    for (let k = 0; k < options.samples + 20; k++) {
      const got = new Promise((resolve) => ws.once('message', resolve));
      const sent = performance.now();
      udp.send(packet, ports.udp, '127.0.0.1');
      await got;
      if (k >= 20) ms.push(performance.now() - sent);
      collect();
    }
    udp.close();
    ws.close();
    ms.sort((a, b) => a - b);
    return { p50Ms: percentile(ms, 50), p99Ms: percentile(ms, 99), maxMs: ms[ms.length - 1] };
  } finally {
    child.kill();
  }
}

// The worker of `through: 'worker'` hands every message back, after `busyMs` of work.
if (!isMainThread) {
  const { busyMs } = workerData as { busyMs: number };
  parentPort!.on('message', (m) => {
    const until = performance.now() + busyMs;
    while (performance.now() < until);
    parentPort!.postMessage(m);
  });
} else if (process.argv[2] === 'serve') serve(Number(process.argv[3]), process.argv[4] as Through, Number(process.argv[5]));
