/**
 * The live session's bookkeeping as a pure reducer: the clock, the notes'
 * sequence numbers, the notes still held, and the standing warning.
 * `stepSession(state, event, config)` gives the next state and the effects
 * the daemon (bridge/daemon/daemon.ts) carries out, in order: score a note
 * at its note-on, log and show a note once it is whole, empty the scorer's
 * window, raise or clear a warning. Nothing here touches a socket, a file
 * or the time of day: every time comes in with its event.
 *
 * A note is scored at its note-on (matching looks at onsets only) and is
 * whole at once for a `note` command, at the note-off for on/off pairs; a
 * held note is closed by a retrigger of the same channel and pitch, a reset,
 * MIDI Start, or the end of the session (`{ type: 'end' }`).
 *
 * @example
 *   const config = { window: 16, threshold: 0.6, hysteresis: 0.2, minNotes: 8, consecutive: 2, warn: true };
 *   let s = initialSession(120, 0);
 *   let step = stepSession(s, { type: 'input', command: { kind: 'on', pitch: 60, velocity: 90, channel: 1 }, atMs: 0, now: 0 }, config);
 *   step.effects   // → [{ type: 'score', note: { seq: 1, onset: 0, duration: 0, pitch: 60, velocity: 90, channel: 1 } }]
 *   step = stepSession(step.state, { type: 'input', command: { kind: 'off', pitch: 60, channel: 1 }, atMs: 500, now: 500 }, config);
 *   step.effects   // → [{ type: 'whole', note: { seq: 1, onset: 0, duration: 1, ... }, receivedAt: 0 }]
 */
import { type Clock, beatAt, internalClock, midiContinue, midiStart, midiStop, midiTick, setBeat, setTempo, songPosition } from './clock.js';
import { type PolicyAction, type PolicyConfig, type PolicyState, initialPolicy, resetPolicy, stepPolicy } from './warning-policy.js';

/**
 * What an input adapter (OSC, MIDI) tells the daemon, once it has checked
 * it: the one vocabulary of the note stream. Channels are 1–16 as musicians
 * count; beats are quarter notes.
 */
export type InputCommand =
  /** A whole note; `beat` null = now. */
  | { kind: 'note'; pitch: number; velocity: number; duration: number; beat: number | null; channel: number }
  | { kind: 'on'; pitch: number; velocity: number; channel: number }
  | { kind: 'off'; pitch: number; channel: number }
  | { kind: 'tempo'; bpm: number }
  | { kind: 'beat'; beat: number }
  /** Empties the window: a new passage, same session. */
  | { kind: 'reset' }
  /** MIDI real-time and Song Position Pointer (value in sixteenths). */
  | { kind: 'clock' }
  | { kind: 'start' }
  | { kind: 'continue' }
  | { kind: 'stop' }
  | { kind: 'position'; value: number }
  /** The session's time signature, for the bars and beats of its positions (core/bars.ts). */
  | { kind: 'meter'; numerator: number; denominator: number };

/** A played note as the scorer takes it and the `note` event shows it. */
export interface SessionNote {
  /** Its number in the session, from 1. */
  seq: number;
  /** Beats (quarter notes) on the session's clock. */
  onset: number;
  duration: number;
  /** MIDI note number, 0–127. */
  pitch: number;
  velocity: number;
  /** MIDI channel 1–16. */
  channel: number;
}

/** What a verdict says about its best match, as far as warnings need it. */
export interface VerdictMatch {
  piece: string;
  /** The piece's number in the corpus: passages are compared by it. */
  pieceIndex: number;
  title: string;
  transposition: number;
  pieceStart: number;
  /** pieceStart as bar and beat in the piece's metre (core/bars.ts); null before the piece begins. */
  pieceBar?: number | null;
  pieceBeatInBar?: number | null;
  distinctiveness?: number;
  /** The played passage's length over the corpus's (tempo-free matching); 1 or absent at the corpus tempo. */
  timeScale?: number;
}

/** Which recent stretch of the window matched (core/stretch.ts), in the session's beats. */
export interface StretchSummary {
  /** Onsets of its first and last notes. */
  startBeat: number;
  endBeat: number;
  notes: number;
  /** Its nominal length, beats, and the score that length must reach. */
  beats: number;
  threshold: number;
  score: number;
}

export interface Verdict {
  /** Seq of the last note the evaluation includes. */
  seq: number;
  score: number;
  windowNotes: number;
  windowStart: number;
  match: VerdictMatch | null;
  /** The recent stretch judged, when one matched; `hot` when it warns on its own. */
  stretch?: (StretchSummary & { hot: boolean; match: VerdictMatch }) | null;
}

/** A warning as raised: what the WebSocket's warning event (contract/events.ts) and the session log say. */
export interface Warning {
  /** Seq of the last note of the window warned about. */
  seq: number;
  /** Wall-clock time it was raised, ms since the epoch. */
  time: number;
  piece: string;
  title: string;
  score: number;
  transposition: number;
  pieceStart: number;
  /** pieceStart as bar and beat in the piece's metre, when known; null before the piece begins. */
  pieceBar?: number | null;
  pieceBeatInBar?: number | null;
  /** Where the window warned about starts, in the session's beats. */
  startBeat: number;
  /** Of the match warned about, as in the score event. */
  distinctiveness?: number;
  /** Present when a tempo-free match found the passage at another tempo: its length played over the corpus's. */
  timeScale?: number;
  /** When a recent stretch raised it: which (then piece, score and pieceStart are the stretch's). */
  stretch?: StretchSummary;
}

export interface SessionState {
  clock: Clock;
  /** Seq of the latest note (0 before the first). */
  seq: number;
  /** Notes sounding now (on/off input), by `channel:pitch`, with the time each arrived. */
  held: ReadonlyMap<string, { note: SessionNote; receivedAt: number }>;
  policy: PolicyState;
  standing: Warning | null;
  /** Warnings raised this session. */
  warnings: number;
}

export type SessionEvent =
  /** An input command, at the time it takes effect (`atMs`; a scheduled OSC bundle's is later than its arrival) and the wall clock now. */
  | { type: 'input'; command: InputCommand; atMs: number; now: number }
  /** A verdict on the notes since the latest reset, at wall-clock `time`. */
  | { type: 'verdict'; verdict: Verdict; time: number }
  /** The session ends: held notes are closed. */
  | { type: 'end'; atMs: number };

export type SessionEffect =
  /** Send to the scorer now. */
  | { type: 'score'; note: SessionNote }
  /** The note is whole: log it and show it. */
  | { type: 'whole'; note: SessionNote; receivedAt: number }
  /** Empty the scorer's window: a new passage. */
  | { type: 'reset-scorer' }
  | { type: 'raise'; warning: Warning }
  /** The session's time signature is now this: keep it with the session. */
  | { type: 'meter'; numerator: number; denominator: number }
  /** The standing warning clears; `seq` is the verdict's, or the latest note's on a reset. */
  | { type: 'clear'; warning: Warning; seq: number; time: number };

/** What a session needs of its preset: the warning rule and the window (a passage's length). */
export type SessionConfig = PolicyConfig & { window: number };

export const initialSession = (bpm: number, nowMs: number): SessionState => ({
  clock: internalClock(bpm, nowMs),
  seq: 0,
  held: new Map(),
  policy: initialPolicy(),
  standing: null,
  warnings: 0,
});

interface Step {
  state: SessionState;
  effects: SessionEffect[];
}

const heldKey = (channel: number, pitch: number): string => `${channel}:${pitch}`;

/** A new note: the next seq, scored at once. */
function begin(step: Step, note: Omit<SessionNote, 'seq'>): SessionNote {
  const n = { seq: step.state.seq + 1, ...note };
  step.state = { ...step.state, seq: n.seq };
  step.effects.push({ type: 'score', note: n });
  return n;
}

/** Closes a held note, its duration measured on the clock. */
function release(step: Step, key: string, atMs: number): void {
  const h = step.state.held.get(key);
  if (!h) return;
  const held = new Map(step.state.held);
  held.delete(key);
  step.state = { ...step.state, held };
  step.effects.push({ type: 'whole', note: { ...h.note, duration: Math.max(0, beatAt(step.state.clock, atMs) - h.note.onset) }, receivedAt: h.receivedAt });
}

const releaseAll = (step: Step, atMs: number): void => {
  for (const key of [...step.state.held.keys()]) release(step, key, atMs);
};

/** The warning policy's actions, as effects; a raise needs the verdict's match. */
function act(step: Step, actions: PolicyAction[], verdict: Verdict | null, time: number): void {
  for (const a of actions) {
    const standing = step.state.standing;
    if (a.type === 'clear' && standing) {
      step.state = { ...step.state, standing: null };
      step.effects.push({ type: 'clear', warning: standing, seq: verdict?.seq ?? step.state.seq, time });
    } else if (a.type === 'raise' && a.stretch && verdict?.stretch) {
      const { hot, match: m, ...stretch } = verdict.stretch;
      const warning: Warning = { seq: verdict.seq, time, piece: m.piece, title: m.title, score: stretch.score, transposition: m.transposition, pieceStart: m.pieceStart, startBeat: stretch.startBeat, distinctiveness: m.distinctiveness, stretch };
      step.state = { ...step.state, standing: warning, warnings: step.state.warnings + 1 };
      step.effects.push({ type: 'raise', warning });
    } else if (a.type === 'raise' && verdict?.match) {
      const m = verdict.match;
      const warning: Warning = {
        seq: verdict.seq, time, piece: m.piece, title: m.title, score: verdict.score, transposition: m.transposition, pieceStart: m.pieceStart,
        ...(m.pieceBar === undefined ? {} : { pieceBar: m.pieceBar, pieceBeatInBar: m.pieceBeatInBar ?? null }), startBeat: verdict.windowStart, distinctiveness: m.distinctiveness,
        ...(m.timeScale === undefined || m.timeScale === 1 ? {} : { timeScale: m.timeScale }),
      };
      step.state = { ...step.state, standing: warning, warnings: step.state.warnings + 1 };
      step.effects.push({ type: 'raise', warning });
    }
  }
}

/** A new passage: held notes close, the window empties, a standing warning clears. */
function newPassage(step: Step, atMs: number, now: number): void {
  releaseAll(step, atMs);
  step.effects.push({ type: 'reset-scorer' });
  const r = resetPolicy(step.state.policy);
  step.state = { ...step.state, policy: r.state };
  act(step, r.actions, null, now);
}

function input(step: Step, c: InputCommand, atMs: number, now: number): void {
  const clock = step.state.clock;
  const setClock = (next: Clock): void => void (step.state = { ...step.state, clock: next });
  switch (c.kind) {
    case 'note': {
      const note = begin(step, { onset: c.beat ?? beatAt(clock, atMs), duration: c.duration, pitch: c.pitch, velocity: c.velocity, channel: c.channel });
      step.effects.push({ type: 'whole', note, receivedAt: atMs });
      return;
    }
    case 'on': {
      const key = heldKey(c.channel, c.pitch);
      release(step, key, atMs);
      const note = begin(step, { onset: beatAt(clock, atMs), duration: 0, pitch: c.pitch, velocity: c.velocity, channel: c.channel });
      step.state = { ...step.state, held: new Map(step.state.held).set(key, { note, receivedAt: atMs }) };
      return;
    }
    case 'off':
      return release(step, heldKey(c.channel, c.pitch), atMs);
    case 'tempo':
      return setClock(setTempo(clock, c.bpm, atMs));
    case 'beat':
      return setClock(setBeat(clock, c.beat, atMs));
    case 'reset':
      return newPassage(step, atMs, now);
    case 'clock':
      return setClock(midiTick(clock, atMs));
    case 'start':
      // MIDI Start plays the song from its beginning: a new take, so a new passage.
      newPassage(step, atMs, now);
      return setClock(midiStart(step.state.clock, atMs));
    case 'continue':
      return setClock(midiContinue(clock, atMs));
    case 'stop':
      return setClock(midiStop(clock, atMs));
    case 'position':
      return setClock(songPosition(clock, c.value, atMs));
    case 'meter':
      return void step.effects.push({ type: 'meter', numerator: c.numerator, denominator: c.denominator });
  }
}

export function stepSession(state: SessionState, event: SessionEvent, config: SessionConfig): Step {
  const step: Step = { state, effects: [] };
  if (event.type === 'input') input(step, event.command, event.atMs, event.now);
  else if (event.type === 'end') releaseAll(step, event.atMs);
  else {
    const v = event.verdict;
    const m = v.match;
    const st = v.stretch;
    const stretch = st ? { hot: st.hot, passage: { piece: st.match.pieceIndex, pieceStart: st.match.pieceStart, beats: st.beats }, score: st.score, threshold: st.threshold } : null;
    const evaluation = { score: v.score, windowNotes: v.windowNotes, passage: m ? { piece: m.pieceIndex, pieceStart: m.pieceStart, beats: config.window } : null, distinctiveness: m?.distinctiveness, stretch };
    const r = stepPolicy(state.policy, evaluation, config);
    step.state = { ...step.state, policy: r.state };
    act(step, r.actions, v, event.time);
  }
  return step;
}
