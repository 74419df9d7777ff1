/**
 * The page's line to the daemon: one WebSocket to `/events` on the page's
 * own host, reopened by itself with a growing delay whenever it drops.
 *
 * @example
 *   const stop = connect(eventsUrl(location), {
 *     open: () => {}, closed: () => {}, event: (e) => console.log(e.type),
 *   });
 */
import type { DaemonEvent } from '../../contract/events.js';

/** Longest wait between attempts: a restarted daemon is found within this. */
export const MAX_RETRY_MS = 3000;
const FIRST_RETRY_MS = 250;

/**
 * `ws(s)://<same host>/events`, carrying the page's `?token=` on: the
 * daemon refuses other origins, and asks for the token when it listens
 * beyond loopback.
 *
 * @example
 *   eventsUrl({ protocol: 'https:', host: 'stage:8080', search: '?token=a b' })
 *   // → 'wss://stage:8080/events?token=a%20b'
 */
export function eventsUrl(page: Pick<Location, 'protocol' | 'host' | 'search'>): string {
  const scheme = page.protocol === 'https:' ? 'wss:' : 'ws:';
  const token = new URLSearchParams(page.search).get('token');
  return `${scheme}//${page.host}/events${token === null ? '' : `?token=${encodeURIComponent(token)}`}`;
}

/** Delay before attempt `n` (0 = first retry): doubling from 250 ms, capped at MAX_RETRY_MS. */
export const retryDelay = (n: number): number => Math.min(MAX_RETRY_MS, FIRST_RETRY_MS * 2 ** Math.max(0, n));

const TYPES = new Set<string>(['hello', 'note', 'score', 'warning', 'clear']);

/**
 * One message → an event, or a reason it is not one. Types this page does
 * not know are skipped quietly, so a newer daemon can add some.
 */
export function parseEvent(data: unknown): DaemonEvent | { skip: string } {
  if (typeof data !== 'string') return { skip: 'a binary message (events are JSON text)' };
  let value: unknown;
  try {
    value = JSON.parse(data);
  } catch {
    return { skip: `a message that is not JSON: ${data.slice(0, 80)}` };
  }
  const type = (value as { type?: unknown } | null)?.type;
  if (typeof type !== 'string') return { skip: `a message without a "type": ${data.slice(0, 80)}` };
  if (!TYPES.has(type)) return { skip: '' };
  return value as DaemonEvent;
}

export interface Listener {
  open(): void;
  event(e: DaemonEvent): void;
  /** The socket closed; another attempt follows by itself. */
  closed(): void;
}

/** Keeps a socket open to `url` until the returned function is called. */
export function connect(url: string, on: Listener): () => void {
  let attempt = 0;
  let socket: WebSocket | null = null;
  let timer: ReturnType<typeof setTimeout> | undefined;
  let stopped = false;

  const open = (): void => {
    socket = new WebSocket(url);
    socket.onopen = () => {
      attempt = 0;
      on.open();
    };
    socket.onmessage = (m) => {
      const e = parseEvent(m.data);
      if ('skip' in e) {
        if (e.skip) console.warn(`earwitness overlay: skipped ${e.skip}`);
      } else on.event(e);
    };
    socket.onclose = () => {
      if (stopped) return;
      on.closed();
      timer = setTimeout(open, retryDelay(attempt++));
    };
  };

  open();
  return () => {
    stopped = true;
    clearTimeout(timer);
    socket?.close();
  };
}
