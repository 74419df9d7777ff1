/**
 * The overlay's view state, and the pure reducer that turns daemon events,
 * connection changes and the performer's clicks into it. Everything the
 * page draws is read from this one value, so the page is exactly as right
 * as these functions, which run (and are tested) without a browser.
 *
 * @example
 *   let s = initialState();
 *   s = reduce(s, { kind: 'open' });
 *   s = reduce(s, { kind: 'event', event: hello, at: Date.now() });
 *   s.connection   // → 'open'
 */
import type { ClearEvent, DaemonEvent, HelloEvent, NoteEvent, ScoreEvent, WarningEvent } from '../../contract/events.js';

/** How far back the timeline reaches, in ms of the daemon's clock. */
export const TIMELINE_MS = 3 * 60_000;

/**
 * Most played notes kept for the piano roll. Notes leave once a score's
 * window has passed them; this bounds memory if scores stop arriving.
 */
export const MAX_NOTES = 2048;

export type Connection = 'connecting' | 'open' | 'retrying';

export interface TimelinePoint {
  time: number;
  score: number;
}

/** A span of the timeline during which a warning stood; `end` is null while it still stands. */
export interface WarningSpan {
  start: number;
  end: number | null;
  title: string;
}

export interface ViewState {
  connection: Connection;
  hello: HelloEvent | null;
  /** Played notes since the last hello that a later window may still hold, oldest first. */
  notes: NoteEvent[];
  score: ScoreEvent | null;
  /** The warning standing now, or null. */
  warning: WarningEvent | null;
  /** The performer dismissed the standing warning; a new warning raises the banner again. */
  dismissed: boolean;
  scores: TimelinePoint[];
  spans: WarningSpan[];
  /** Browser clock minus daemon clock at the last timed event, so the timeline scrolls in the daemon's time. */
  clockOffset: number;
  showRoll: boolean;
}

export type Action =
  | { kind: 'open' }
  | { kind: 'closed' }
  | { kind: 'event'; event: DaemonEvent; at: number }
  | { kind: 'dismiss' }
  | { kind: 'toggle-roll' };

export const initialState = (): ViewState => ({
  connection: 'connecting',
  hello: null,
  notes: [],
  score: null,
  warning: null,
  dismissed: false,
  scores: [],
  spans: [],
  clockOffset: 0,
  showRoll: true,
});

type Timed = ScoreEvent | WarningEvent | ClearEvent;

/** Adds one timed event to the timeline, then forgets what is older than TIMELINE_MS. */
function addToTimeline(s: Pick<ViewState, 'scores' | 'spans'>, e: Timed): Pick<ViewState, 'scores' | 'spans'> {
  let { scores, spans } = s;
  if (e.type === 'score') scores = [...scores, { time: e.time, score: e.score }];
  else if (e.type === 'warning') spans = [...closeSpans(spans, e.time), { start: e.time, end: null, title: e.title }];
  else spans = closeSpans(spans, e.time);
  const from = e.time - TIMELINE_MS;
  return {
    scores: scores.filter((p) => p.time >= from),
    spans: spans.filter((w) => w.end === null || w.end >= from),
  };
}

const closeSpans = (spans: readonly WarningSpan[], time: number): WarningSpan[] =>
  spans.map((w) => (w.end === null ? { ...w, end: time } : w));

/** The state a hello sets up: the daemon's settings, and the timeline and warning its history implies. */
function fromHello(s: ViewState, hello: HelloEvent): ViewState {
  const start: ViewState = { ...s, hello, notes: [], score: null, warning: null, dismissed: false, scores: [], spans: [] };
  // History is old news: its times say nothing of the clocks' offset, which the next live event sets.
  return hello.history.reduce((next, e) => onTimed(next, e, null), start);
}

/** `at`: when a live event arrived (browser clock), or null for one replayed from history. */
function onTimed(s: ViewState, e: Timed, at: number | null): ViewState {
  const next = { ...s, ...addToTimeline(s, e), clockOffset: at === null ? s.clockOffset : at - e.time };
  switch (e.type) {
    case 'score':
      return { ...next, score: e, notes: s.notes.filter((n) => n.onset >= e.windowStart) };
    case 'warning':
      return { ...next, warning: e, dismissed: false };
    case 'clear':
      return { ...next, warning: null, dismissed: false };
  }
}

function onNote(s: ViewState, n: NoteEvent): ViewState {
  const notes = [...s.notes, n];
  return { ...s, notes: notes.length > MAX_NOTES ? notes.slice(notes.length - MAX_NOTES) : notes };
}

export function reduce(s: ViewState, a: Action): ViewState {
  switch (a.kind) {
    case 'open':
      return { ...s, connection: 'open' };
    case 'closed':
      return { ...s, connection: 'retrying' };
    case 'dismiss':
      return s.warning ? { ...s, dismissed: true } : s;
    case 'toggle-roll':
      return { ...s, showRoll: !s.showRoll };
    case 'event': {
      const e = a.event;
      if (e.type === 'hello') return fromHello(s, e);
      if (e.type === 'note') return onNote(s, e);
      return onTimed(s, e, a.at);
    }
  }
}

/** What the status line says, most pressing first. */
export function status(s: ViewState): { state: 'connecting' | 'retrying' | 'waiting' | 'listening'; words: string } {
  if (s.connection === 'retrying') return { state: 'retrying', words: 'disconnected — retrying' };
  if (s.connection === 'connecting' || !s.hello) return { state: 'connecting', words: 'connecting…' };
  if (s.notes.length === 0 && !s.score) return { state: 'waiting', words: 'waiting for input' };
  return { state: 'listening', words: 'listening' };
}

/** A score as a whole percentage. */
export const percent = (score: number): string => `${Math.round(score * 100)}%`;

export interface RollNote {
  onset: number;
  duration: number;
  pitch: number;
}

export interface Roll {
  start: number;
  end: number;
  played: RollNote[];
  /** The matched corpus excerpt moved onto the played window by the match's translation. */
  corpus: (RollNote & { matched: boolean })[];
  /** The recent stretch judged, in played beats, and whether it warns on its own; null when none matched. */
  stretch: { start: number; end: number; hot: boolean } | null;
}

/**
 * The piano roll of the last score: played notes inside its window, and the
 * corpus excerpt aligned with them (played onset = windowStart + (corpus
 * onset − pieceStart) × timeScale, which is corpus onset + timeShift at the
 * corpus tempo; played pitch = corpus pitch + transposition).
 */
export function roll(s: ViewState): Roll | null {
  const sc = s.score;
  if (!sc) return null;
  const played = s.notes
    .filter((n) => n.onset >= sc.windowStart && n.onset < sc.windowEnd)
    .map(({ onset, duration, pitch }) => ({ onset, duration, pitch }));
  const up = sc.transposition ?? 0;
  // On the played time: the excerpt's start at the window's, its beats stretched by the time scale (1 at the corpus tempo).
  const scale = sc.timeScale ?? 1;
  const from = sc.pieceStart ?? sc.windowStart - (sc.timeShift ?? 0);
  const corpus = (sc.excerpt ?? []).map((n) => ({ onset: sc.windowStart + (n.onset - from) * scale, duration: n.duration * scale, pitch: n.pitch + up, matched: n.matched }));
  const st = sc.stretch;
  return { start: sc.windowStart, end: sc.windowEnd, played, corpus, stretch: st ? { start: st.startBeat, end: st.endBeat, hot: st.hot } : null };
}
