/**
 * Matching done elsewhere, for code that asks its matcher one window at a
 * time: run it once with a recording matcher to learn which windows it asks
 * for (every answer null), match those windows however (the shards' queues,
 * bridge/queue/), then run it again with a matcher that replays the answers
 * in the same order. The reports ask for the same windows whatever the
 * answers (core/report.ts), so the second run is the report.
 *
 * @example
 *   const rec = recordingMatcher(16);
 *   originalityReport(queries, view, rec.matcher, shape);              // learns rec.windows
 *   const matches = await elsewhere(rec.windows);
 *   originalityReport(queries, view, replayingMatcher(16, rec.windows, matches), shape);
 */
import type { MatchWindow, WindowMatch, WindowMatcher } from './match.js';

export function recordingMatcher(windowBeats: number): { matcher: WindowMatcher; windows: MatchWindow[] } {
  const windows: MatchWindow[] = [];
  const best = (w: MatchWindow): null => {
    windows.push(w);
    return null;
  };
  return { windows, matcher: { windowBeats, best } };
}

/** Answers the recorded windows in order; a window asked for out of turn is an error, never a wrong answer. */
export function replayingMatcher(windowBeats: number, windows: readonly MatchWindow[], matches: readonly (WindowMatch | null)[]): WindowMatcher {
  if (matches.length !== windows.length) throw new RangeError(`${matches.length} answers for ${windows.length} windows`);
  let next = 0;
  return {
    windowBeats,
    best(w) {
      const was = windows[next];
      if (!was || was.startGrains !== w.startGrains || was.points.length !== w.points.length || was.exclude !== w.exclude) {
        throw new RangeError(`window ${next + 1} was not recorded as asked now (start ${w.startGrains} grains, ${w.points.length} points)`);
      }
      return matches[next++];
    },
  };
}
