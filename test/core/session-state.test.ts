/**
 * The live session's bookkeeping (core/session-state.ts) without a socket:
 * held notes, sequence numbers, the clock, and warnings raised and cleared,
 * as (state, event) → (state, effects). Timing is plain arithmetic: at 120
 * quarter notes a minute a beat lasts 500 ms.
 */
import { describe, expect, it } from 'vitest';
import { type InputCommand, type SessionConfig, type SessionEffect, type SessionEvent, type SessionState, type Verdict, initialSession, stepSession } from '../../core/session-state.js';

const config: SessionConfig = { window: 16, threshold: 0.6, hysteresis: 0.2, minNotes: 4, consecutive: 2, warn: true };

/** Runs events in order from a fresh session at 120 BPM started at 0 ms; every effect, in order. */
function run(events: SessionEvent[], from: SessionState = initialSession(120, 0)): { state: SessionState; effects: SessionEffect[] } {
  let state = from;
  const effects: SessionEffect[] = [];
  for (const e of events) {
    const step = stepSession(state, e, config);
    state = step.state;
    effects.push(...step.effects);
  }
  return { state, effects };
}

const at = (atMs: number, command: InputCommand): SessionEvent => ({ type: 'input', command, atMs, now: atMs });
const on = (atMs: number, pitch: number, channel = 1) => at(atMs, { kind: 'on', pitch, velocity: 90, channel });
const off = (atMs: number, pitch: number, channel = 1) => at(atMs, { kind: 'off', pitch, channel });

const verdict = (seq: number, score: number, piece = 'tune.mid', pieceStart = 8): SessionEvent => ({
  type: 'verdict',
  time: 10_000 + seq,
  verdict: { seq, score, windowNotes: 12, windowStart: 4, match: { piece, pieceIndex: piece === 'tune.mid' ? 0 : 1, title: 'A tune', transposition: 2, pieceStart, distinctiveness: 1 } } satisfies Verdict,
});

describe('held notes', () => {
  it('a note is scored at its note-on and whole at its note-off, its duration measured on the clock', () => {
    const { state, effects } = run([on(0, 60), off(500, 60)]);
    expect(effects).toEqual([
      { type: 'score', note: { seq: 1, onset: 0, duration: 0, pitch: 60, velocity: 90, channel: 1 } },
      { type: 'whole', note: { seq: 1, onset: 0, duration: 1, pitch: 60, velocity: 90, channel: 1 }, receivedAt: 0 },
    ]);
    expect(state.held.size).toBe(0);
    expect(state.seq).toBe(1);
  });

  it('a retrigger of the same channel and pitch closes the held note first; another channel is another note', () => {
    const { state, effects } = run([on(0, 60), on(250, 60, 2), on(1000, 60)]);
    expect(effects.map((e) => `${e.type} ${e.note?.seq}`)).toEqual(['score 1', 'score 2', 'whole 1', 'score 3']);
    expect(effects[2]).toMatchObject({ type: 'whole', note: { duration: 2 } });
    expect([...state.held.keys()].sort()).toEqual(['1:60', '2:60']);
  });

  it('an off with nothing held, and a whole note command, need no bookkeeping', () => {
    const { state, effects } = run([off(0, 61), at(500, { kind: 'note', pitch: 64, velocity: 80, duration: 0.5, beat: null, channel: 3 }), at(600, { kind: 'note', pitch: 65, velocity: 80, duration: 1, beat: 7, channel: 3 })]);
    expect(effects).toEqual([
      { type: 'score', note: { seq: 1, onset: 1, duration: 0.5, pitch: 64, velocity: 80, channel: 3 } },
      { type: 'whole', note: { seq: 1, onset: 1, duration: 0.5, pitch: 64, velocity: 80, channel: 3 }, receivedAt: 500 },
      { type: 'score', note: { seq: 2, onset: 7, duration: 1, pitch: 65, velocity: 80, channel: 3 } },
      { type: 'whole', note: { seq: 2, onset: 7, duration: 1, pitch: 65, velocity: 80, channel: 3 }, receivedAt: 600 },
    ]);
    expect(state.held.size).toBe(0);
  });

  it('the end of the session closes every held note', () => {
    const { state, effects } = run([on(0, 60), on(0, 64), { type: 'end', atMs: 1000 }]);
    expect(effects.filter((e) => e.type === 'whole').map((e) => e.note?.duration)).toEqual([2, 2]);
    expect(state.held.size).toBe(0);
  });

  it('a step leaves the state it was given as it was', () => {
    const before = run([on(0, 60)]).state;
    const held = [...before.held.keys()];
    stepSession(before, off(500, 60), config);
    stepSession(before, at(500, { kind: 'tempo', bpm: 60 }), config);
    expect([...before.held.keys()]).toEqual(held);
    expect(before.clock.bpm).toBe(120);
  });
});

describe('the clock', () => {
  it('tempo and beat commands move it; MIDI Start starts a new passage at beat 0', () => {
    const { state, effects } = run([at(1000, { kind: 'tempo', bpm: 60 }), at(2000, { kind: 'beat', beat: 32 }), on(3000, 60), at(3500, { kind: 'start' }), on(3500, 62)]);
    expect(effects[0]).toMatchObject({ type: 'score', note: { onset: 33 } });
    expect(effects.slice(1, 3)).toEqual([{ type: 'whole', note: expect.objectContaining({ seq: 1, duration: 0.5 }), receivedAt: 3000 }, { type: 'reset-scorer' }]);
    expect(effects[3]).toMatchObject({ type: 'score', note: { seq: 2, onset: 0 } });
    expect(state.clock.source).toBe('midi');
  });
});

describe('warnings', () => {
  it('two hot verdicts in a row raise one warning naming the match; two cool ones clear it', () => {
    const raised = run([verdict(1, 0.9), verdict(2, 0.9), verdict(3, 0.95)]);
    const warning = { seq: 2, time: 10_002, piece: 'tune.mid', title: 'A tune', score: 0.9, transposition: 2, pieceStart: 8, startBeat: 4, distinctiveness: 1 };
    expect(raised.effects).toEqual([{ type: 'raise', warning }]);
    expect(raised.state).toMatchObject({ standing: warning, warnings: 1 });
    const cleared = run([verdict(4, 0.1), verdict(5, 0.1)], raised.state);
    expect(cleared.effects).toEqual([{ type: 'clear', warning, seq: 5, time: 10_005 }]);
    expect(cleared.state).toMatchObject({ standing: null, warnings: 1 });
  });

  it('a reset closes held notes, empties the window and clears the standing warning at once, with the latest note\'s seq', () => {
    const raised = run([on(0, 60), verdict(1, 0.9), verdict(1, 0.9)]);
    const { state, effects } = run([{ type: 'input', command: { kind: 'reset' }, atMs: 500, now: 20_000 }], raised.state);
    expect(effects).toEqual([
      { type: 'whole', note: expect.objectContaining({ seq: 1, duration: 1 }), receivedAt: 0 },
      { type: 'reset-scorer' },
      { type: 'clear', warning: raised.state.standing, seq: 1, time: 20_000 },
    ]);
    expect(state.standing).toBeNull();
  });

  it('hot verdicts of another passage clear the warning and raise one for it; with warn off nothing is raised', () => {
    const first = run([verdict(1, 0.9), verdict(2, 0.9)]);
    const moved = run([verdict(3, 0.9, 'other.mid'), verdict(4, 0.9, 'other.mid')], first.state);
    expect(moved.effects.map((e) => e.type)).toEqual(['clear', 'raise']);
    expect(moved.state).toMatchObject({ standing: { piece: 'other.mid' }, warnings: 2 });
    let s = initialSession(120, 0);
    for (const v of [verdict(1, 0.9), verdict(2, 0.9), verdict(3, 0.9)]) {
      const step = stepSession(s, v, { ...config, warn: false });
      expect(step.effects).toEqual([]);
      s = step.state;
    }
  });
});
