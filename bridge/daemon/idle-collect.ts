/**
 * Garbage collection at a moment of our choosing. Scoring a note makes
 * many short-lived objects; left to itself, the engine
 * collects the young generation whenever it fills, which is in the middle
 * of some later note's scoring, and a collection that finds that note's
 * working set still alive copies it. Collected just after a verdict has
 * gone, when the thread is idle and holds little, the same collection is
 * short and delays no note.
 *
 * The engine hands its collector only to threads started after it is told
 * to (`exposeCollector()`, before `new Worker`): the scoring worker has it,
 * the main thread does not. `idleCollector()` returns a function to call once
 * a thread's work for an event is done: it collects the young generation when
 * at least `share` of it is in use (reading the engine's space figures costs
 * microseconds), or the whole heap when asked (`{ full: true }`: once, after
 * loading, so the loading's garbage is not left for a note to pay for). In a
 * thread without the collector it does nothing.
 *
 * @example
 *   exposeCollector();                  // main thread, before the worker starts
 *   // in the worker:
 *   const collect = idleCollector();
 *   collect({ full: true });            // the corpus is loaded
 *   port.postMessage(verdict);
 *   collect();
 */
import { getHeapSpaceStatistics, setFlagsFromString } from 'node:v8';

type Collect = (options: { type: 'minor' | 'major' }) => void;

/** Share of the young generation in use past which an idle moment collects it. */
export const IDLE_COLLECT_SHARE = 0.25;

export type IdleCollect = (options?: { full?: boolean }) => void;

/** Threads started from now on get the engine's collector (`gc`) as a global. */
export function exposeCollector(): void {
  setFlagsFromString('--expose-gc');
}

export function idleCollector(options: { share?: number } = {}): IdleCollect {
  const share = options.share ?? IDLE_COLLECT_SHARE;
  const gc = (globalThis as { gc?: Collect }).gc;
  if (typeof gc !== 'function') return () => {};
  return ({ full = false } = {}) => {
    if (full) return gc({ type: 'major' });
    const young = getHeapSpaceStatistics().find((s) => s.space_name === 'new_space');
    if (young && young.space_used_size > share * (young.space_used_size + young.space_available_size)) gc({ type: 'minor' });
  };
}
