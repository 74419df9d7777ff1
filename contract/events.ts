/**
 * Events the daemon pushes on the WebSocket `/events` (JSON, one per
 * message, each with a `type`). The overlay and any other client read these;
 * this file is the contract. Beats are quarter notes; `transposition` is the
 * pitch shift from the corpus excerpt to what was played. A note and a
 * warning are the session's own records (core/session-state.ts), sent with
 * their `type`.
 */
import type { SessionNote, StretchSummary, Warning } from '../core/session-state.js';

export interface HelloEvent {
  type: 'hello';
  version: string;
  corpus: { source: string; pieces: number; notes: number };
  /** `pitch`: the dimension matched in; transpositions count semitones (chromatic, when absent) or diatonic steps (morphetic). */
  preset: { name: string; window: number; threshold: number; minNotes: number; consecutive: number; warn: boolean; pitch?: 'chromatic' | 'morphetic'; tolerance?: number; tempoFree?: boolean; minDistinctiveness?: number; early?: EarlyRule };
  midi: { available: boolean; detail: string };
  osc: { port: number };
  /** Recent score and warning events, so a page that reconnects can redraw its timeline; only the newest score keeps its `excerpt` (older ones have null). */
  history: (ScoreEvent | WarningEvent | ClearEvent)[];
}

/** A played note once it is whole: seq, onset, duration, pitch, velocity, channel. */
export interface NoteEvent extends SessionNote {
  type: 'note';
}

/** A corpus note of the matched excerpt, at its own onset in the piece. */
export interface ExcerptNote {
  onset: number;
  duration: number;
  pitch: number;
  /** True when the translation lands it on a played note. */
  matched: boolean;
}

export interface ScoreEvent {
  type: 'score';
  /** Sequence number of the last note this evaluation includes. */
  seq: number;
  /** Wall-clock time of the evaluation, ms since the epoch. */
  time: number;
  score: number;
  /** Path of the best piece in the corpus, or null when nothing matched. */
  piece: string | null;
  /** Its title, or its file name. */
  title: string | null;
  pieceStart: number | null;
  /** pieceStart as bar and beat in the piece's metre, counted from 1 (core/bars.ts); null when nothing matched or before the piece begins. */
  pieceBar?: number | null;
  pieceBeatInBar?: number | null;
  transposition: number | null;
  /** Beats from the corpus excerpt to the played window: played onset = corpus onset + timeShift (at timeScale 1). */
  timeShift: number | null;
  /** The played passage's length over the corpus's: 1 at the corpus tempo, another only with tempo-free matching; played onset = windowStart + (corpus onset − pieceStart) × timeScale. Null when nothing matched; absent from older daemons (read as 1). */
  timeScale?: number | null;
  matched: number;
  windowNotes: number;
  windowStart: number;
  windowEnd: number;
  excerpt: ExcerptNote[] | null;
  /** 1 when the matched material is found in one corpus place only, near 0 for a stock figure (core/distinctiveness.ts); null when nothing matched. */
  distinctiveness?: number | null;
  /** The recent stretch judged (core/stretch.ts), when the preset warns early and one matched; `hot` when it warns on its own. */
  stretch?: ScoreStretch | null;
  /** What this scoring pass cost the scorer, ms: its own time, not the note's trip to it and back. Absent from older daemons. */
  scoringMs?: number;
}

/** How early a preset warns: the recent stretch lengths (beats) judged on their own, each length's threshold, the share of its corpus passage a stretch may leave out below that threshold (core/stretch.ts `leavesOut`), and the stretch's fewest onsets (a chord counts once) and least distinctiveness. */
export interface EarlyRule {
  lengths: readonly number[];
  thresholds: readonly number[];
  leftOut: number;
  minOnsets: number;
  minDistinctiveness: number;
}

/** A recent stretch of the window and its own best match: where it lies in the session's beats, and the corpus passage under the same translation. */
export interface ScoreStretch extends StretchSummary {
  hot: boolean;
  piece: string;
  title: string;
  pieceStart: number;
  transposition: number;
  matched: number;
  /** Counted only for a stretch that reaches its threshold; null otherwise. */
  distinctiveness: number | null;
}

/** What a warning says about the match, as pushed on /events and kept in the session log. */
export type WarnedMatch = Pick<Warning, 'piece' | 'title' | 'score' | 'transposition' | 'pieceStart' | 'startBeat' | 'stretch'>;

/** seq, time, piece, title, score, transposition, pieceStart, startBeat, distinctiveness when counted, and `stretch` when a recent stretch raised it. */
export interface WarningEvent extends Warning {
  type: 'warning';
}

export interface ClearEvent {
  type: 'clear';
  seq: number;
  time: number;
  piece: string;
}

export type DaemonEvent = HelloEvent | NoteEvent | ScoreEvent | WarningEvent | ClearEvent;
