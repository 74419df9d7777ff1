import { describe, expect, it } from 'vitest';
import type { ClearEvent, DaemonEvent, HelloEvent, NoteEvent, ScoreEvent, WarningEvent } from '../../contract/events.js';
import { eventsUrl, parseEvent, retryDelay, MAX_RETRY_MS } from '../../ui/src/connection.js';
import { headlineWords } from '../../ui/src/headline.js';
import { type Action, type ViewState, MAX_NOTES, TIMELINE_MS, initialState, reduce, roll, status } from '../../ui/src/state.js';

const T0 = 1_700_000_000_000;

const hello = (history: HelloEvent['history'] = [], over: Partial<HelloEvent> = {}): HelloEvent => ({
  type: 'hello',
  version: '0.1.0',
  corpus: { source: 'tunes', pieces: 12, notes: 720 },
  preset: { name: 'default', window: 16, threshold: 0.75, minNotes: 8, consecutive: 2, warn: true },
  midi: { available: true, detail: 'ALSA: 1 input' },
  osc: { port: 9000 },
  history,
  ...over,
});

const note = (seq: number, onset: number, pitch = 60): NoteEvent => ({ type: 'note', seq, onset, duration: 0.5, pitch, velocity: 90, channel: 1 });

const score = (time: number, value: number, over: Partial<ScoreEvent> = {}): ScoreEvent => ({
  type: 'score',
  seq: 0,
  time,
  score: value,
  piece: 'reels/ninth.mid',
  title: 'The Ninth Buoy',
  pieceStart: 8,
  transposition: 5,
  timeShift: 92,
  matched: 3,
  windowNotes: 4,
  windowStart: 100,
  windowEnd: 116,
  excerpt: null,
  ...over,
});

const warning = (time: number, title = 'The Ninth Buoy'): WarningEvent => ({
  type: 'warning', seq: 1, time, piece: 'reels/ninth.mid', title, score: 0.86, transposition: 5, pieceStart: 8, startBeat: 100,
});
const clear = (time: number): ClearEvent => ({ type: 'clear', seq: 2, time, piece: 'reels/ninth.mid' });

const ev = (event: DaemonEvent, at = T0): Action => ({ kind: 'event', event, at });
const run = (...actions: Action[]): ViewState => actions.reduce(reduce, initialState());

describe('overlay view state', () => {
  it('walks connecting → waiting for input → listening, and says disconnected — retrying when the socket drops', () => {
    expect(status(run()).words).toBe('connecting…');
    expect(status(run({ kind: 'open' })).words).toBe('connecting…');
    const connected = run({ kind: 'open' }, ev(hello()));
    expect(status(connected)).toEqual({ state: 'waiting', words: 'waiting for input' });
    expect(status(reduce(connected, ev(note(1, 0))))).toEqual({ state: 'listening', words: 'listening' });
    expect(status(reduce(connected, { kind: 'closed' }))).toEqual({ state: 'retrying', words: 'disconnected — retrying' });
  });

  it('raises the warning on `warning` and lowers it on `clear`; dismiss only hides the banner until the next warning', () => {
    const raised = run(ev(hello()), ev(warning(T0)));
    expect(raised.warning?.title).toBe('The Ninth Buoy');
    expect(headlineWords(raised).lead).toBe('Close to:');
    const dismissed = reduce(raised, { kind: 'dismiss' });
    expect(dismissed.dismissed).toBe(true);
    expect(dismissed.warning).not.toBeNull();
    expect(reduce(dismissed, ev(warning(T0 + 1000, 'Skerrow Light')))).toMatchObject({ dismissed: false, warning: { title: 'Skerrow Light' } });
    const cleared = reduce(dismissed, ev(clear(T0 + 2000)));
    expect(cleared.warning).toBeNull();
    expect(cleared.dismissed).toBe(false);
    // Nothing to dismiss: the state is left as it is.
    expect(reduce(cleared, { kind: 'dismiss' })).toBe(cleared);
  });

  it('rebuilds the timeline and the standing warning from hello.history on reconnect', () => {
    const history = [score(T0, 0.4), score(T0 + 1000, 0.8), warning(T0 + 1000), score(T0 + 2000, 0.9)];
    const first = run(ev(hello()), ev(score(T0 - 5000, 0.1)));
    const again = [{ kind: 'closed' } as Action, { kind: 'open' } as Action, ev(hello(history), T0 + 60_000)].reduce(reduce, first);
    expect(again.scores).toEqual([{ time: T0, score: 0.4 }, { time: T0 + 1000, score: 0.8 }, { time: T0 + 2000, score: 0.9 }]);
    expect(again.spans).toEqual([{ start: T0 + 1000, end: null, title: 'The Ninth Buoy' }]);
    expect(again.warning?.title).toBe('The Ninth Buoy');
    expect(again.score?.score).toBe(0.9);
    // Replayed history does not move the clock offset; only live events do.
    expect(again.clockOffset).toBe(first.clockOffset);
  });

  it('closes a warning span at its clear and forgets what is older than the timeline', () => {
    let s = run(ev(hello()), ev(score(T0, 0.8)), ev(warning(T0)), ev(clear(T0 + 3000)));
    expect(s.spans).toEqual([{ start: T0, end: T0 + 3000, title: 'The Ninth Buoy' }]);
    s = reduce(s, ev(score(T0 + 3000 + TIMELINE_MS + 1, 0.1)));
    expect(s.scores).toEqual([{ time: T0 + 3000 + TIMELINE_MS + 1, score: 0.1 }]);
    expect(s.spans).toEqual([]);
  });

  it('measures the offset between the browser clock and the daemon clock from live events', () => {
    expect(run(ev(hello()), ev(score(T0, 0.2), T0 + 250)).clockOffset).toBe(250);
  });

  it('keeps the played notes inside the last score window and aligns the excerpt by the translation', () => {
    const excerpt = [
      { onset: 8, duration: 1, pitch: 60, matched: true },
      { onset: 9.5, duration: 0.5, pitch: 62, matched: false },
    ];
    const s = run(
      ev(hello()),
      ev(note(1, 99, 70)), // before the window: dropped
      ev(note(2, 100, 65)),
      ev(note(3, 101, 66)),
      ev(note(4, 116, 67)), // at windowEnd: outside [start, end)
      ev(score(T0, 0.5, { excerpt, timeShift: 92, transposition: 5, windowStart: 100, windowEnd: 116 })),
    );
    expect(s.notes.map((n) => n.seq)).toEqual([2, 3, 4]);
    expect(roll(s)).toEqual({
      start: 100,
      end: 116,
      played: [{ onset: 100, duration: 0.5, pitch: 65 }, { onset: 101, duration: 0.5, pitch: 66 }],
      // played onset = corpus onset + timeShift, played pitch = corpus pitch + transposition (contract/events.ts)
      corpus: [{ onset: 100, duration: 1, pitch: 65, matched: true }, { onset: 101.5, duration: 0.5, pitch: 67, matched: false }],
      stretch: null,
    });
  });

  it('stretches the excerpt by the time scale of a match at another tempo', () => {
    const excerpt = [
      { onset: 8, duration: 1, pitch: 60, matched: true },
      { onset: 9.5, duration: 0.5, pitch: 62, matched: true },
    ];
    // Played 1.5 times as long: corpus beat 8 (pieceStart) at the window's start, every corpus beat 1.5 played beats.
    const s = run(ev(hello()), ev(score(T0, 1, { excerpt, pieceStart: 8, timeShift: 92, timeScale: 1.5, transposition: 0, windowStart: 100, windowEnd: 116 })));
    expect(roll(s)?.corpus).toEqual([
      { onset: 100, duration: 1.5, pitch: 60, matched: true },
      { onset: 102.25, duration: 0.75, pitch: 62, matched: true },
    ]);
  });

  it('shows the recent stretch a score judged, in played beats', () => {
    const stretch = { startBeat: 104, endBeat: 107.5, notes: 8, beats: 4, threshold: 0.95, score: 1, hot: true, piece: 'a.mid', title: 'a', pieceStart: 12, transposition: 5, matched: 8, distinctiveness: 1 };
    const s = run(ev(hello()), ev(note(1, 104, 65)), ev(score(T0, 0.3, { windowStart: 100, windowEnd: 116, stretch })));
    expect(roll(s)?.stretch).toEqual({ start: 104, end: 107.5, hot: true });
  });

  it('keeps at most MAX_NOTES notes when no score arrives to move the window on', () => {
    let s = run(ev(hello()));
    for (let i = 0; i < MAX_NOTES + 10; i++) s = reduce(s, ev(note(i, i)));
    expect(s.notes).toHaveLength(MAX_NOTES);
    expect(s.notes[0].seq).toBe(10);
  });

  it('has no piano roll before the first score, and toggles it on request', () => {
    expect(roll(run(ev(hello()), ev(note(1, 0))))).toBeNull();
    expect(run({ kind: 'toggle-roll' }).showRoll).toBe(false);
    expect(run({ kind: 'toggle-roll' }, { kind: 'toggle-roll' }).showRoll).toBe(true);
  });

  it('names the nearest piece, transposition and place, or says nothing matched', () => {
    const s = run(ev(hello()), ev(score(T0, 0.42, { transposition: -2, pieceStart: 12.5 })));
    // No bar fields in the event: the piece counts in 4/4, so beat 12.5 is bar 4, beat 1.5.
    expect(headlineWords(s)).toEqual({ lead: 'Nearest:', title: 'The Ninth Buoy', where: '42% now · 2 semitones down · from bar 4, beat 1.5' });
    const placed = run(ev(hello()), ev(score(T0, 0.42, { transposition: 0, pieceStart: 9, pieceBar: 4, pieceBeatInBar: 1 })));
    expect(headlineWords(placed).where).toBe('42% now · same pitch · from bar 4, beat 1');
    const before = run(ev(hello()), ev(score(T0, 0.42, { pieceStart: -2, pieceBar: null, pieceBeatInBar: null })));
    expect(headlineWords(before).where).toBe('42% now · 5 semitones up · from 2 beats before the piece begins');
    // A tempo-free match says its tempo when it is not the corpus's; within 2% it says nothing of it.
    const slower = run(ev(hello()), ev(score(T0, 0.42, { transposition: 0, pieceStart: 9, pieceBar: 4, pieceBeatInBar: 1, timeScale: 1.5 })));
    expect(headlineWords(slower).where).toBe('42% now · same pitch · 1.5× as long (slower) · from bar 4, beat 1');
    const near = run(ev(hello()), ev(score(T0, 0.42, { transposition: 0, pieceStart: 9, pieceBar: 4, pieceBeatInBar: 1, timeScale: 1.01 })));
    expect(headlineWords(near).where).toBe('42% now · same pitch · from bar 4, beat 1');
    const none = run(ev(hello()), ev(score(T0, 0, { piece: null, title: null, pieceStart: null, transposition: null, timeShift: null })));
    expect(headlineWords(none)).toEqual({ lead: 'Nearest:', title: 'nothing in the corpus', where: '0% now' });
    const steps = run(ev(hello([], { preset: { ...hello().preset, pitch: 'morphetic' } })), ev(score(T0, 0.5, { transposition: 1 })));
    expect(headlineWords(steps).where).toBe('50% now · 1 scale step up · from bar 3, beat 1');
  });

  it('names both figures: the score a warning was raised at, apart from the meter\'s "now"', () => {
    expect(headlineWords(run(ev(hello()), ev(warning(T0)))).where).toBe('warned at 86% · 5 semitones up · from bar 3, beat 1');
  });
});



describe('overlay connection', () => {
  it('connects to /events on the page host, ws or wss as the page, passing ?token= on', () => {
    expect(eventsUrl({ protocol: 'http:', host: '127.0.0.1:8080', search: '' })).toBe('ws://127.0.0.1:8080/events');
    expect(eventsUrl({ protocol: 'https:', host: 'stage.local', search: '?token=a b&x=1' })).toBe('wss://stage.local/events?token=a%20b');
    expect(eventsUrl({ protocol: 'http:', host: 'h:1', search: '?x=1' })).toBe('ws://h:1/events');
  });

  it('backs off from a quarter second, doubling, and never waits more than a few seconds', () => {
    expect([0, 1, 2, 3, 4, 10].map(retryDelay)).toEqual([250, 500, 1000, 2000, MAX_RETRY_MS, MAX_RETRY_MS]);
    expect(MAX_RETRY_MS).toBeLessThanOrEqual(5000);
  });

  it('reads events, skips unknown types quietly and says why a message is not an event', () => {
    expect(parseEvent(JSON.stringify(clear(T0)))).toEqual(clear(T0));
    expect(parseEvent('{"type":"tempo","bpm":120}')).toEqual({ skip: '' });
    expect(parseEvent('not json')).toEqual({ skip: 'a message that is not JSON: not json' });
    expect(parseEvent('[1,2]')).toEqual({ skip: 'a message without a "type": [1,2]' });
    expect(parseEvent(new ArrayBuffer(2))).toEqual({ skip: 'a binary message (events are JSON text)' });
  });
});
